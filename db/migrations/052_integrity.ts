/**
 * Integrity sweep (docs/compliance.md, "Integrity sweep"; issue 12 item 3): records of what was
 * re-checked and what no longer matched.
 * - integrity_run: one sweep (scheduled, or asked for by an auditor or QA), with its progress
 *   (operational: the running sweep updates its counters).
 * - integrity_alert: a mismatch found (a stored file whose bytes no longer give its SHA-256, a
 *   signed record whose content no longer gives its signature's content hash, a certificate whose
 *   PDF no longer gives its SHA-256, an account whose roles differ from its latest grant), where it
 *   was found (sweep, download, review, verification) and by whom; append-only.
 * - integrity_alert_record: the records that show an alert (a test, a reference, an instrument
 *   check, a certificate, an account); append-only.
 * - integrity_signoff: QA's signed review of an alert (what was done about it); append-only, one per
 *   alert, and its signature must be an 'integrity-reviewed' signature of that alert.
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly } from '../protect';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('integrity_run', (t) => {
    t.increments('id').primary();
    t.string('origin', 16).notNullable(); // schedule, request
    t.integer('requested_by').unsigned().nullable().references('app_user.id');
    t.datetime('requested_at', { precision: 3 }).notNullable();
    t.string('status', 16).notNullable(); // queued, running, finished, failed
    t.datetime('started_at', { precision: 3 }).nullable();
    t.datetime('finished_at', { precision: 3 }).nullable();
    t.integer('files_total').notNullable().defaultTo(0);
    t.integer('files_checked').notNullable().defaultTo(0);
    t.integer('signatures_total').notNullable().defaultTo(0);
    t.integer('signatures_checked').notNullable().defaultTo(0);
    t.integer('certificates_checked').notNullable().defaultTo(0);
    t.integer('accounts_checked').notNullable().defaultTo(0);
    t.integer('mismatches').notNullable().defaultTo(0);
    t.text('unchecked').nullable(); // JSON {"entity/meaning": count} of signatures without a recipe
    t.text('error').nullable();
    t.index(['status', 'id']);
  });
  await knex.schema.createTable('integrity_alert', (t) => {
    t.increments('id').primary();
    t.string('kind', 24).notNullable(); // file-hash, signature-content, certificate-hash, role-grant
    t.string('subject_type', 40).notNullable(); // stored_file, e_signature, certificate, app_user
    t.string('subject_id', 64).notNullable();
    t.string('expected', 200).notNullable();
    t.string('found', 200).notNullable();
    t.text('summary').notNullable();
    t.text('detail').nullable(); // JSON
    t.string('found_in', 16).notNullable(); // sweep, download, review, verification
    t.integer('found_by').unsigned().nullable().references('app_user.id');
    t.integer('run_id').unsigned().nullable().references('integrity_run.id');
    t.datetime('found_at', { precision: 3 }).notNullable();
    t.unique(['kind', 'subject_type', 'subject_id', 'found']);
    t.index(['found_at']);
  });
  await knex.schema.createTable('integrity_alert_record', (t) => {
    t.increments('id').primary();
    t.integer('alert_id').unsigned().notNullable().references('integrity_alert.id');
    t.string('record_type', 40).notNullable();
    t.string('record_id', 64).notNullable();
    t.string('label', 200).notNullable();
    t.index(['record_type', 'record_id']);
  });
  await knex.schema.createTable('integrity_signoff', (t) => {
    t.increments('id').primary();
    t.integer('alert_id').unsigned().notNullable().unique().references('integrity_alert.id');
    t.text('comment').notNullable();
    t.integer('signed_by').unsigned().notNullable().references('app_user.id');
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.datetime('signed_at', { precision: 3 }).notNullable();
  });
  for (const t of ['integrity_alert', 'integrity_alert_record', 'integrity_signoff']) await appendOnly(knex, t);
  await knex.raw(`CREATE TRIGGER integrity_signoff_check BEFORE INSERT ON integrity_signoff FOR EACH ROW
BEGIN
  IF NOT EXISTS (SELECT 1 FROM e_signature s WHERE s.id = NEW.signature_id AND s.user_id = NEW.signed_by
      AND s.entity_type = 'integrity_alert' AND BINARY s.entity_id = BINARY CAST(NEW.alert_id AS CHAR)
      AND s.meaning = 'integrity-reviewed') THEN
    SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'a sign-off needs the reviewer''s integrity-reviewed signature of this alert';
  END IF;
END`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP TRIGGER IF EXISTS integrity_signoff_check');
  for (const t of ['integrity_signoff', 'integrity_alert_record', 'integrity_alert']) {
    await dropAppendOnly(knex, t);
    await knex.schema.dropTableIfExists(t);
  }
  await knex.schema.dropTableIfExists('integrity_run');
}
