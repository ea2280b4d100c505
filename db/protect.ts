/**
 * Protection of GMP rows in the database itself (docs/compliance.md, "What protects what").
 * Migrations call these helpers; each makes protecting a table one line:
 *
 *   await appendOnly(knex, 'my_table');                 // no UPDATE, no DELETE, for any account
 *   await guardRows(knex, { table: 'my_table', fixed: [...], ... });   // only the permitted changes
 *
 * and the table is then listed in db/migrations/index.ts (appendOnlyTables or guardedTables), which
 * sets the runtime account's grants (db/migrate.ts). tests/api/db-protection.test.ts fails for any
 * table that is not classified there, and for a guarded table whose guard does not classify every
 * column (a migration that adds a column to a guarded table re-applies the guard with the column
 * classified; the guard's marker comment lists the classification).
 *
 * A guard is one BEFORE UPDATE trigger generated from a declaration: columns that never change,
 * columns set once (from NULL) and never again, a state column with its permitted transitions,
 * states in which the row is frozen (only the named columns may still change), columns a state
 * requires, signature columns that must point to a signature of this very row with the right
 * meaning, and extra conditions. A BEFORE DELETE trigger refuses every deletion. Triggers run for
 * every account, the owner included; only an account holding the TRIGGER privilege can remove them,
 * which the runtime account does not hold (the integrity sweep and the audit chain exist for that case).
 */
import type { Knex } from 'knex';

/** SQLSTATE of every refusal by a protection trigger (user-defined exception). */
export const PROTECTION_SQLSTATE = '45000';

function ident(name: string): string {
  if (!/^[a-z][a-z0-9_]*$/.test(name)) throw new Error(`not a plain identifier: ${name}`);
  return `\`${name}\``;
}

function lit(s: string): string {
  if (/[?\\]/.test(s)) throw new Error(`no ? or backslash in trigger text (knex placeholders): ${s}`);
  return `'${s.replace(/'/g, "''")}'`;
}

/** Refuses UPDATE and DELETE on `table` for every account (triggers `<table>_no_update`, `<table>_no_delete`). */
export async function appendOnly(knex: Knex, table: string): Promise<void> {
  for (const op of ['update', 'delete'] as const) {
    await knex.raw(`DROP TRIGGER IF EXISTS ${ident(`${table}_no_${op}`)}`);
    await knex.raw(
      `CREATE TRIGGER ${ident(`${table}_no_${op}`)} BEFORE ${op.toUpperCase()} ON ${ident(table)} FOR EACH ROW ` +
        `SIGNAL SQLSTATE '${PROTECTION_SQLSTATE}' SET MESSAGE_TEXT = ${lit(`${table} is append-only`)}`,
    );
  }
}

export async function dropAppendOnly(knex: Knex, table: string): Promise<void> {
  await knex.raw(`DROP TRIGGER IF EXISTS ${ident(`${table}_no_update`)}`);
  await knex.raw(`DROP TRIGGER IF EXISTS ${ident(`${table}_no_delete`)}`);
}

export interface StateRule {
  column: string;
  /** permitted changes of the column, [from, to]; any other change is refused */
  transitions: [string, string][];
  /** in these states (of OLD) nothing may change except the listed columns */
  frozen?: { states: string[]; except: string[] }[];
  /** entering state `to` requires these columns to be NOT NULL in NEW */
  requires?: Record<string, string[]>;
}

export interface GuardSpec {
  table: string;
  /** never change after the INSERT */
  fixed: string[];
  /** may be set once from NULL, never changed afterwards */
  setOnce?: string[];
  /** may change (within the state rules); listed so that every column is classified */
  mutable?: string[];
  states?: StateRule[];
  /** a change of the column must point to an e_signature of this row (entity type, id) with one of the meanings */
  signatures?: Record<string, { entityType: string; meanings: string[] }>;
  /** further conditions on NEW/OLD that must hold after every UPDATE */
  checks?: { sql: string; message: string }[];
}

export const guardTriggerName = (table: string) => `${table}_guard_update`;

const same = (c: string) => `(NEW.${ident(c)} <=> OLD.${ident(c)})`;

/** The CREATE TRIGGER statement of a guard (exported for the unit test of the generator). */
export function guardTriggerSql(spec: GuardSpec, columns: string[]): string {
  const t = spec.table;
  const classified = new Set<string>([
    ...spec.fixed,
    ...(spec.setOnce ?? []),
    ...(spec.mutable ?? []),
    ...(spec.states ?? []).map((s) => s.column),
  ]);
  // A column nobody classified (e.g. added by a later migration before the guard was re-applied)
  // stays compared in frozen states; the marker names it, and tests/api/db-protection.test.ts fails.
  const unclassified = columns.filter((c) => !classified.has(c));
  if (unclassified.length) console.warn(`[guard] ${t}: unclassified column(s) ${unclassified.join(', ')}`);
  const unknown = [...classified].filter((c) => !columns.includes(c));
  if (unknown.length) throw new Error(`guard of ${t}: no column(s) ${unknown.join(', ')}`);

  const lines: string[] = [];
  const refuse = (cond: string, message: string) =>
    lines.push(
      `  IF ${cond} THEN`,
      `    SET msg = CONCAT(${lit(`${t} `)}, OLD.id, ${lit(`: ${message}`)});`,
      `    SIGNAL SQLSTATE '${PROTECTION_SQLSTATE}' SET MESSAGE_TEXT = msg;`,
      '  END IF;',
    );
  for (const c of spec.fixed) refuse(`NOT ${same(c)}`, `${c} never changes once recorded`);
  for (const c of spec.setOnce ?? [])
    refuse(`OLD.${ident(c)} IS NOT NULL AND NOT ${same(c)}`, `${c} is set once and never changed`);
  for (const s of spec.states ?? []) {
    const col = ident(s.column);
    const allowed = s.transitions.map(([a, b]) => `(OLD.${col} = ${lit(a)} AND NEW.${col} = ${lit(b)})`);
    lines.push(
      `  IF NOT (NEW.${col} <=> OLD.${col}) AND NOT (${allowed.length ? allowed.join(' OR ') : 'FALSE'}) THEN`,
      `    SET msg = CONCAT(${lit(`${t} `)}, OLD.id, ${lit(`: ${s.column} may not change from `)}, IFNULL(OLD.${col}, 'NULL'), ${lit(' to ')}, IFNULL(NEW.${col}, 'NULL'));`,
      `    SIGNAL SQLSTATE '${PROTECTION_SQLSTATE}' SET MESSAGE_TEXT = msg;`,
      '  END IF;',
    );
    for (const f of s.frozen ?? []) {
      const inState = `OLD.${col} IN (${f.states.map(lit).join(', ')})`;
      for (const c of columns.filter((x) => x !== s.column && !f.except.includes(x) && !spec.fixed.includes(x)))
        refuse(`${inState} AND NOT ${same(c)}`, `${c} cannot change once ${f.states.join(' or ')}`);
    }
    for (const [to, cols] of Object.entries(s.requires ?? {}))
      refuse(
        `NEW.${col} = ${lit(to)} AND NOT (OLD.${col} <=> ${lit(to)}) AND (${cols.map((c) => `NEW.${ident(c)} IS NULL`).join(' OR ')})`,
        `${s.column} ${to} needs ${cols.join(', ')}`,
      );
  }
  for (const [c, sig] of Object.entries(spec.signatures ?? {}))
    refuse(
      `NEW.${ident(c)} IS NOT NULL AND NOT ${same(c)} AND NOT EXISTS (SELECT 1 FROM e_signature s WHERE s.id = NEW.${ident(c)} ` +
        `AND s.entity_type = ${lit(sig.entityType)} AND BINARY s.entity_id = BINARY CAST(NEW.id AS CHAR) AND s.meaning IN (${sig.meanings.map(lit).join(', ')}))`,
      `${c} must name a ${sig.meanings.join(' or ')} signature of this ${sig.entityType}`,
    );
  for (const ch of spec.checks ?? []) refuse(`NOT (${ch.sql})`, ch.message);

  return [
    `CREATE TRIGGER ${ident(guardTriggerName(t))} BEFORE UPDATE ON ${ident(t)} FOR EACH ROW`,
    'BEGIN',
    `  /* drumline-guard ${t}: fixed ${spec.fixed.join(', ') || '-'}; set once ${(spec.setOnce ?? []).join(', ') || '-'}; ` +
      `mutable ${(spec.mutable ?? []).join(', ') || '-'}; states ${(spec.states ?? []).map((s) => s.column).join(', ') || '-'}` +
      `${unclassified.length ? `; UNCLASSIFIED ${unclassified.join(', ')}` : ''} */`,
    '  DECLARE msg VARCHAR(512);',
    ...lines,
    'END',
  ].join('\n');
}

async function columnsOf(knex: Knex, table: string): Promise<string[]> {
  const rows = (await knex.raw(
    'SELECT column_name AS c FROM information_schema.columns WHERE table_schema = DATABASE() AND table_name = ? ORDER BY ordinal_position',
    [table],
  )) as [{ c: string }[]];
  if (!rows[0].length) throw new Error(`guard: no table ${table}`);
  return rows[0].map((r) => r.c);
}

/**
 * Creates (or re-creates) the guard of a table: the BEFORE UPDATE trigger generated from `spec`
 * and a BEFORE DELETE trigger that refuses every deletion. Every column of the table must be
 * classified in `spec` (an error names the ones that are not).
 */
export async function guardRows(knex: Knex, spec: GuardSpec): Promise<void> {
  const sql = guardTriggerSql(spec, await columnsOf(knex, spec.table));
  await knex.raw(`DROP TRIGGER IF EXISTS ${ident(guardTriggerName(spec.table))}`);
  await knex.raw(sql);
  await knex.raw(`DROP TRIGGER IF EXISTS ${ident(`${spec.table}_no_delete`)}`);
  await knex.raw(
    `CREATE TRIGGER ${ident(`${spec.table}_no_delete`)} BEFORE DELETE ON ${ident(spec.table)} FOR EACH ROW ` +
      `SIGNAL SQLSTATE '${PROTECTION_SQLSTATE}' SET MESSAGE_TEXT = ${lit(`${spec.table} rows are never deleted`)}`,
  );
}

export async function dropGuard(knex: Knex, table: string): Promise<void> {
  await knex.raw(`DROP TRIGGER IF EXISTS ${ident(guardTriggerName(table))}`);
  await knex.raw(`DROP TRIGGER IF EXISTS ${ident(`${table}_no_delete`)}`);
}
