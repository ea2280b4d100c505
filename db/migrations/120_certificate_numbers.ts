/**
 * Certificate numbers without collisions or gaps (issue 11 item 5; docs/certificates.md,
 * "Numbers"):
 * - certificate_counter: one row per year holding the last sequence given out. Guarded: the year
 *   never changes, the sequence only ever advances by exactly one, rows are never deleted.
 * - certificate_number: a number taken from the counter for a lot (in the same short transaction
 *   that advances the counter), before its PDF is rendered and signed; append-only. Every number
 *   the counter gives out has its row, so a number is either on a certificate or visibly reserved
 *   for a lot that is still waiting for it.
 * - certificate_issue_failure: why an attempt to issue a reserved number failed (no PDF, no SQL,
 *   only the sentence); append-only. QA's work queue lists the reserved numbers still open.
 * A certificate row may only be inserted with a number reserved for its own lot (trigger).
 * Existing certificates get their reservation rows and the counter starts after them.
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly, dropGuard, guardRows } from '../protect';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('certificate_counter', (t) => {
    t.increments('id').primary();
    t.integer('year').unsigned().notNullable().unique();
    t.integer('last_seq').unsigned().notNullable();
  });
  await knex.schema.createTable('certificate_number', (t) => {
    t.increments('id').primary();
    t.string('number', 40).notNullable().unique();
    t.integer('year').unsigned().notNullable();
    t.integer('seq').unsigned().notNullable();
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.integer('test_id').unsigned().notNullable().references('identity_test.id');
    t.integer('supersedes_id').unsigned().nullable().references('certificate.id');
    t.integer('reserved_by').unsigned().nullable().references('app_user.id');
    t.datetime('reserved_at', { precision: 3 }).notNullable();
    t.unique(['year', 'seq']);
    t.index(['lot_id']);
  });
  await knex.schema.createTable('certificate_issue_failure', (t) => {
    t.increments('id').primary();
    t.integer('number_id').unsigned().notNullable().references('certificate_number.id');
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.string('problem', 1000).notNullable();
    t.datetime('failed_at', { precision: 3 }).notNullable();
    t.index(['number_id']);
  });

  // Existing certificates: their numbers are reserved (as of their issue) and the counter follows them.
  await knex.raw(`INSERT INTO certificate_number (number, year, seq, lot_id, test_id, supersedes_id, reserved_by, reserved_at)
    SELECT number, CAST(SUBSTRING(number, 4, 4) AS UNSIGNED), CAST(SUBSTRING(number, 9) AS UNSIGNED),
           lot_id, test_id, supersedes_id, issued_by, issued_at
    FROM certificate WHERE number REGEXP '^IC-[0-9]{4}-[0-9]+$' ORDER BY id`);
  await knex.raw(`INSERT INTO certificate_counter (year, last_seq)
    SELECT year, MAX(seq) FROM certificate_number GROUP BY year`);

  await guardRows(knex, {
    table: 'certificate_counter',
    fixed: ['id', 'year'],
    mutable: ['last_seq'],
    checks: [{ sql: 'NEW.last_seq = OLD.last_seq + 1', message: 'a certificate counter only advances by one' }],
  });
  await appendOnly(knex, 'certificate_number');
  await appendOnly(knex, 'certificate_issue_failure');
  await knex.raw(`CREATE TRIGGER certificate_number_reserved BEFORE INSERT ON certificate FOR EACH ROW
BEGIN
  IF NOT EXISTS (SELECT 1 FROM certificate_number n WHERE BINARY n.number = BINARY NEW.number AND n.lot_id = NEW.lot_id
      AND n.test_id = NEW.test_id AND (n.supersedes_id <=> NEW.supersedes_id)) THEN
    SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'a certificate needs a number reserved for its lot, test and predecessor';
  END IF;
END`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP TRIGGER IF EXISTS certificate_number_reserved');
  await dropAppendOnly(knex, 'certificate_issue_failure');
  await dropAppendOnly(knex, 'certificate_number');
  await dropGuard(knex, 'certificate_counter');
  await knex.schema.dropTable('certificate_issue_failure');
  await knex.schema.dropTable('certificate_number');
  await knex.schema.dropTable('certificate_counter');
}
