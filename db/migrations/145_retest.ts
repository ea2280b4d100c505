/**
 * Retest of a released lot (issue 14 item 5: "a retest starts a new identity test under the
 * current method"). QA starts it with an e-signature; the lot goes back to quarantine and to
 * "awaiting testing", and its outcome goes through verification and disposition again.
 *
 * - lot_retest (append-only): one row per retest: the release it reopens (each release is reopened
 *   at most once: UNIQUE), the retest date that was due, QA's reason and signature;
 * - the lot guard (re-applied from lotGuard144): a released lot returns to quarantine only together
 *   with identity "passed" -> "awaiting testing" and only through a retest row that names the
 *   lot's current release; retest_date and disposition_id are no longer set-once: the disposition
 *   changes only with the lot status, entering "released" needs a new release record, and the
 *   retest date changes only to the date of that new release record.
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly, guardRows, type GuardSpec } from '../protect';
import { lotGuard144 } from './144_integration';

export function lotGuard145(): GuardSpec {
  const base = lotGuard144();
  const states = base.states!.map((s) => {
    if (s.column === 'identity_status')
      return { ...s, transitions: [...s.transitions, ['passed', 'awaiting-testing'] as [string, string]] };
    if (s.column === 'status')
      return { ...s, transitions: [...s.transitions, ['released', 'quarantine'] as [string, string]] };
    return s;
  });
  return {
    ...base,
    setOnce: (base.setOnce ?? []).filter((c) => c !== 'retest_date' && c !== 'disposition_id'),
    mutable: [...(base.mutable ?? []), 'retest_date', 'disposition_id'],
    states,
    checks: [
      // replaced below: a lot of a material whose identity is not tested by IR is released on the
      // replacing identity test's conforming result instead of a passed IR identity
      ...(base.checks ?? []).filter((c) => c.message !== 'only a lot whose identity passed can be released'),
      {
        sql:
          "NOT (NEW.status = 'released') OR OLD.status = 'released' OR NEW.identity_status = 'passed' OR (" +
          'EXISTS (SELECT 1 FROM material_ir_suitability s WHERE s.material_id = NEW.material_id AND s.suitable = 0 AND ' +
          's.id = (SELECT MAX(s2.id) FROM material_ir_suitability s2 WHERE s2.material_id = NEW.material_id)) AND ' +
          "EXISTS (SELECT 1 FROM lot_check c WHERE c.lot_id = NEW.id AND c.check_kind = 'alternative-identity' AND c.outcome = 'conforms'))",
        message:
          'only a lot whose identity passed, or (material not identified by IR) whose replacing identity test conforms, can be released',
      },
      {
        sql:
          "NOT (OLD.status = 'released' AND NEW.status = 'quarantine') OR (NEW.identity_status = 'awaiting-testing' AND " +
          'EXISTS (SELECT 1 FROM lot_retest r WHERE r.lot_id = NEW.id AND r.reopened_disposition_id <=> OLD.disposition_id))',
        message: 'a released lot returns to quarantine only through a signed retest record of its current release',
      },
      {
        sql: "NOT (OLD.identity_status = 'passed' AND NEW.identity_status = 'awaiting-testing') OR (OLD.status = 'released' AND NEW.status = 'quarantine')",
        message: 'identity goes back from passed to awaiting testing only when a released lot is retested',
      },
      {
        sql: 'NEW.disposition_id <=> OLD.disposition_id OR NOT (NEW.status <=> OLD.status)',
        message: 'disposition_id changes only with the lot status',
      },
      {
        sql: "NOT (NEW.status = 'released' AND NOT (OLD.status <=> 'released')) OR NOT (NEW.disposition_id <=> OLD.disposition_id)",
        message: 'each release needs a new release record',
      },
      {
        sql:
          'NEW.retest_date <=> OLD.retest_date OR (NOT (NEW.disposition_id <=> OLD.disposition_id) AND EXISTS (SELECT 1 FROM lot_disposition d ' +
          "WHERE d.id = NEW.disposition_id AND d.lot_id = NEW.id AND d.decision = 'released' AND d.retest_date <=> NEW.retest_date))",
        message: 'the retest date is set only by a release record',
      },
    ],
  };
}

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('lot_retest', (t) => {
    t.increments('id').primary();
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    // the release this retest reopens; a release is reopened once
    t.integer('reopened_disposition_id').unsigned().notNullable().unique().references('lot_disposition.id');
    t.date('retest_date_due').nullable();
    t.text('reason').notNullable();
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.integer('started_by').unsigned().notNullable().references('app_user.id');
    t.datetime('started_at', { precision: 3 }).notNullable();
    t.index(['lot_id', 'id']);
  });
  await knex.raw('ALTER TABLE lot_retest ADD CONSTRAINT lot_retest_reason CHECK (CHAR_LENGTH(TRIM(reason)) >= 10)');
  await knex.raw(
    `CREATE TRIGGER lot_retest_of_release BEFORE INSERT ON lot_retest FOR EACH ROW
     BEGIN
       IF NOT EXISTS (SELECT 1 FROM lot l JOIN lot_disposition d ON d.id = l.disposition_id
                      WHERE l.id = NEW.lot_id AND l.status = 'released' AND d.decision = 'released'
                        AND d.id = NEW.reopened_disposition_id) THEN
         SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'lot_retest: only the current release of a released lot can be reopened';
       END IF;
     END`,
  );
  await appendOnly(knex, 'lot_retest');
  await guardRows(knex, lotGuard145());
}

export async function down(knex: Knex): Promise<void> {
  await guardRows(knex, lotGuard144());
  await knex.raw('DROP TRIGGER IF EXISTS lot_retest_of_release');
  await dropAppendOnly(knex, 'lot_retest');
  await knex.schema.dropTableIfExists('lot_retest');
}
