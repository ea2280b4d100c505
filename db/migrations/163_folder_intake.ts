/**
 * Export-folder intake (issue 15, items 1, 2 and 6; docs/instrument-intake.md).
 * - instrument_intake_setting: append-only; each row is the instrument's intake settings from then
 *   on (export folder, polling, manual upload allowed, the instrument clock's time zone), with who
 *   set them and why. The latest row per instrument applies.
 * - folder_acquisition: append-only; every file that arrived in an export folder, kept with its
 *   stored bytes (stored_file, SHA-256), what it states about its acquisition and the clock offset.
 *   One row per (instrument, path, SHA-256): a file is taken once.
 * - folder_acquisition_event: append-only; what became of an acquisition (attached to a
 *   measurement, left unassigned with why, assigned by an operator, marked "not a sample").
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly } from '../protect';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('instrument_intake_setting', (t) => {
    t.increments('id').primary();
    t.integer('instrument_id').unsigned().notNullable().references('instrument.id');
    t.string('export_folder', 500).nullable();
    t.boolean('use_polling').notNullable();
    t.boolean('manual_upload_allowed').notNullable();
    t.string('time_zone', 64).notNullable();
    t.text('reason').notNullable();
    t.integer('set_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.index(['instrument_id', 'id']);
  });
  await knex.schema.createTable('folder_acquisition', (t) => {
    t.increments('id').primary();
    t.integer('instrument_id').unsigned().notNullable().references('instrument.id');
    t.string('relative_path', 500).notNullable();
    t.integer('file_id').unsigned().notNullable().references('stored_file.id');
    t.string('sha256', 64).notNullable();
    t.integer('size').unsigned().notNullable();
    t.datetime('file_modified_at', { precision: 3 }).nullable();
    t.datetime('received_at', { precision: 3 }).notNullable();
    t.string('acquired_text', 120).nullable();
    t.datetime('acquired_at', { precision: 3 }).nullable();
    t.string('acquired_zone', 64).nullable(); // the zone a time without one was read in
    t.integer('clock_offset_seconds').nullable(); // received_at - acquired_at
    t.string('title', 300).nullable();
    t.string('sample_text', 300).nullable();
    t.string('label_found', 40).nullable();
    t.string('read_error', 500).nullable();
    t.unique(['instrument_id', 'relative_path', 'sha256']);
    t.index(['instrument_id', 'received_at']);
  });
  await knex.schema.createTable('folder_acquisition_event', (t) => {
    t.increments('id').primary();
    t.integer('acquisition_id').unsigned().notNullable().references('folder_acquisition.id');
    t.string('event', 16).notNullable(); // attached, unassigned, assigned, not-a-sample
    t.string('code', 40).nullable(); // why unassigned (NO_LABEL, NO_OPEN_TEST, ... or a refusal code)
    t.text('reason').nullable();
    t.integer('measurement_id').unsigned().nullable().references('measurement.id');
    t.integer('test_id').unsigned().nullable().references('identity_test.id');
    t.integer('container_id').unsigned().nullable().references('container.id');
    t.integer('created_by').unsigned().nullable().references('app_user.id'); // null: the folder watcher
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.index(['acquisition_id', 'id']);
    t.index(['measurement_id']);
  });
  await appendOnly(knex, 'instrument_intake_setting');
  await appendOnly(knex, 'folder_acquisition');
  await appendOnly(knex, 'folder_acquisition_event');
}

export async function down(knex: Knex): Promise<void> {
  for (const t of ['folder_acquisition_event', 'folder_acquisition', 'instrument_intake_setting']) {
    await dropAppendOnly(knex, t);
    await knex.schema.dropTableIfExists(t);
  }
}
