/**
 * The row types of every table, written from the migrated schema itself (docs/architecture.md,
 * "Typed tables"). `npm run db:types` migrates nothing: it reads information_schema of the configured
 * database (migrate first) and writes server/lib/db-tables.ts, which declares each table once for
 * Knex (`knex/types/tables`), so `db('lot').where(...).first()` is typed without a cast.
 * tests/api/db-types.test.ts regenerates the text from the test database and fails when the file
 * differs, so a migration that adds or changes a column cannot land without its type.
 *
 * Column types as mysql2 returns them with Drumline's connection settings (db/config.ts:
 * dateStrings false, bigNumberStrings false): integers and floating point as number, DECIMAL as
 * string, DATE/DATETIME/TIMESTAMP as Date, binary and BLOB columns as Buffer, ENUM as the union of
 * its values, JSON (a checked LONGTEXT in MariaDB) and every other text as string.
 * Insert types make a column optional when it has a default, is nullable or auto-increments.
 * Append-only tables (db/migrations/index.ts) get `never` as their update type: the compiler refuses
 * an update the database triggers would refuse anyway.
 */
import type { Knex } from 'knex';
import prettier from 'prettier';
import { appendOnlyTables } from './migrations/index';

export const TABLE_TYPES_FILE = 'server/lib/db-tables.ts';

interface ColumnInfo {
  table: string;
  column: string;
  dataType: string;
  columnType: string;
  nullable: boolean;
  hasDefault: boolean;
  autoIncrement: boolean;
  generated: boolean;
}

function pascal(name: string): string {
  return name
    .split('_')
    .map((p) => p.charAt(0).toUpperCase() + p.slice(1))
    .join('');
}

/** The TypeScript type of a column's value as read through mysql2. */
export function tsType(dataType: string, columnType: string): string {
  switch (dataType) {
    case 'tinyint':
    case 'smallint':
    case 'mediumint':
    case 'int':
    case 'bigint':
    case 'float':
    case 'double':
    case 'year':
      return 'number';
    case 'decimal':
      return 'string';
    case 'date':
    case 'datetime':
    case 'timestamp':
      return 'Date';
    case 'binary':
    case 'varbinary':
    case 'tinyblob':
    case 'blob':
    case 'mediumblob':
    case 'longblob':
    case 'bit':
      return 'Buffer';
    case 'enum': {
      const values = [...columnType.matchAll(/'((?:[^']|'')*)'/g)].map((m) => m[1].replace(/''/g, "'"));
      return values.map((v) => JSON.stringify(v)).join(' | ');
    }
    default:
      return 'string';
  }
}

/**
 * The type a column takes on insert and update: its read type, and also a 'YYYY-MM-DD' text for a
 * DATE and true/false for a TINYINT(1) flag (mysql2 writes both as MariaDB expects). A DATETIME
 * takes a Date only, so every stored instant goes through the UTC connection setting.
 */
export function insertType(dataType: string, columnType: string): string {
  if (dataType === 'date') return 'Date | string';
  if (dataType === 'tinyint' && /^tinyint\(1\)/i.test(columnType)) return 'number | boolean';
  return tsType(dataType, columnType);
}

async function columns(knex: Knex, database: string): Promise<ColumnInfo[]> {
  const [rows] = (await knex.raw(
    `SELECT c.TABLE_NAME AS t, c.COLUMN_NAME AS c, c.DATA_TYPE AS dt, c.COLUMN_TYPE AS ct,
            c.IS_NULLABLE AS n, c.COLUMN_DEFAULT AS d, c.EXTRA AS x
       FROM information_schema.COLUMNS c
       JOIN information_schema.TABLES t ON t.TABLE_SCHEMA = c.TABLE_SCHEMA AND t.TABLE_NAME = c.TABLE_NAME
      WHERE c.TABLE_SCHEMA = ? AND t.TABLE_TYPE = 'BASE TABLE' AND c.TABLE_NAME NOT LIKE 'knex\\_migrations%'
      ORDER BY c.TABLE_NAME, c.ORDINAL_POSITION`,
    [database],
  )) as [{ t: string; c: string; dt: string; ct: string; n: string; d: string | null; x: string }[]];
  return rows.map((r) => ({
    table: r.t,
    column: r.c,
    dataType: r.dt.toLowerCase(),
    columnType: r.ct,
    nullable: r.n === 'YES',
    // MariaDB reports a nullable column without a default as COLUMN_DEFAULT 'NULL'.
    hasDefault: r.d !== null,
    autoIncrement: /auto_increment/i.test(r.x),
    generated: /VIRTUAL|STORED|PERSISTENT/i.test(r.x),
  }));
}

/** The text of server/lib/db-tables.ts for the schema of `database`. */
export async function tableTypesSource(knex: Knex, database: string): Promise<string> {
  const byTable = new Map<string, ColumnInfo[]>();
  for (const c of await columns(knex, database)) {
    if (!byTable.has(c.table)) byTable.set(c.table, []);
    byTable.get(c.table)!.push(c);
  }
  const out: string[] = [
    '/**',
    ' * Row types of every table, generated from the migrated schema by `npm run db:types` (db/table-types.ts;',
    ' * docs/architecture.md, "Typed tables"). Do not edit: tests/api/db-types.test.ts fails when this file',
    ' * and the schema differ. `Row` is what a select returns, `Insert` what an insert takes.',
    ' */',
    "import type { Knex } from 'knex';",
    '',
  ];
  const entries: string[] = [];
  for (const [table, cols] of [...byTable].sort(([a], [b]) => a.localeCompare(b))) {
    const name = pascal(table);
    out.push(`export interface ${name}Row {`);
    for (const c of cols) out.push(`  ${c.column}: ${tsType(c.dataType, c.columnType)}${c.nullable ? ' | null' : ''};`);
    out.push('}', '');
    const writable = cols.filter((c) => !c.generated);
    out.push(`export interface ${name}Insert {`);
    for (const c of writable) {
      const optional = c.nullable || c.hasDefault || c.autoIncrement;
      out.push(
        `  ${c.column}${optional ? '?' : ''}: ${insertType(c.dataType, c.columnType)}${c.nullable ? ' | null' : ''};`,
      );
    }
    out.push('}', '');
    const update = appendOnlyTables.includes(table) ? 'never' : `Partial<${name}Insert>`;
    entries.push(`    ${table}: Knex.CompositeTableType<${name}Row, ${name}Insert, ${update}>;`);
  }
  out.push("declare module 'knex/types/tables' {", '  interface Tables {', ...entries, '  }', '}', '');
  return out.join('\n');
}

/** The text of server/lib/db-tables.ts as committed: generated, then formatted by the project's Prettier settings. */
export async function formattedTableTypes(knex: Knex, database: string, repoRoot: string): Promise<string> {
  const filepath = `${repoRoot}/${TABLE_TYPES_FILE}`;
  const options = (await prettier.resolveConfig(filepath)) ?? {};
  return prettier.format(await tableTypesSource(knex, database), { ...options, filepath });
}
