/**
 * Provenance of every measurement (docs/provenance.md):
 * - spectrum_fingerprint: one row per stored spectrum (measurement, reference, instrument check)
 *   with the SHA-256 of its raw bytes, of its decoded values, and the coarse fingerprint the copy
 *   lookup searches (server/spectra/provenance.ts); append-only.
 * - measurement_provenance: what the file states about its acquisition (time, instrument, serial,
 *   sample identifier), how Drumline judged it, the identifiers in the file that name another
 *   record and whether the operator confirmed them, and the reason for a re-measurement; one row
 *   per measurement, written with it; append-only.
 * - test_handover: an attempt handed over from one operator to another (who may then add
 *   measurements to it); append-only.
 * - container_block: a container blocked after too many invalid measurements, and QA's signed
 *   decision on how to go on; append-only events (the latest event is the state).
 */
import type { Knex } from 'knex';
import { appendOnly } from '../protect';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('spectrum_fingerprint', (t) => {
    t.increments('id').primary();
    t.integer('file_id').unsigned().notNullable().references('stored_file.id');
    t.string('record_type', 24).notNullable(); // measurement, reference, instrument-check
    t.integer('record_id').unsigned().notNullable();
    t.string('raw_sha256', 64).notNullable();
    t.string('decoded_sha256', 64).notNullable();
    t.integer('points').notNullable();
    t.double('x_low').notNullable();
    t.double('x_high').notNullable();
    t.double('seg1').notNullable();
    t.double('seg2').notNullable();
    t.double('seg3').notNullable();
    t.double('seg4').notNullable();
    t.double('noise').notNullable();
    t.double('y_range').notNullable();
    t.double('y_step').notNullable();
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.index(['raw_sha256']);
    t.index(['decoded_sha256']);
    t.index(['seg1']);
    t.index(['record_type', 'record_id']);
  });
  await appendOnly(knex, 'spectrum_fingerprint');

  await knex.schema.createTable('measurement_provenance', (t) => {
    t.increments('id').primary();
    t.integer('measurement_id').unsigned().notNullable().unique().references('measurement.id');
    t.string('acquired_text', 120).nullable();
    t.datetime('acquired_at', { precision: 3 }).nullable();
    t.string('acquired_judgement', 24).notNullable(); // consistent, not-stated, unreadable
    t.string('instrument_text', 300).nullable();
    t.string('stated_serial', 80).nullable();
    t.string('serial_judgement', 24).notNullable(); // matches, not-stated, no-serial-registered
    t.string('title', 300).nullable();
    t.string('sample_text', 300).nullable();
    t.text('identifier_findings').notNullable(); // JSON [{text, kind, belongsTo}]
    t.boolean('identifiers_confirmed').notNullable().defaultTo(false);
    t.text('remeasure_reason').nullable();
    t.integer('remeasure_of_measurement_id').unsigned().nullable();
    t.datetime('created_at', { precision: 3 }).notNullable();
  });
  await appendOnly(knex, 'measurement_provenance');

  await knex.schema.createTable('test_handover', (t) => {
    t.increments('id').primary();
    t.integer('test_id').unsigned().notNullable().references('identity_test.id');
    t.integer('from_user').unsigned().notNullable().references('app_user.id');
    t.integer('to_user').unsigned().notNullable().references('app_user.id');
    t.text('reason').notNullable();
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.index(['test_id', 'id']);
  });
  await appendOnly(knex, 'test_handover');

  await knex.schema.createTable('container_block', (t) => {
    t.increments('id').primary();
    t.integer('container_id').unsigned().notNullable().references('container.id');
    t.integer('test_id').unsigned().notNullable().references('identity_test.id');
    t.string('event', 16).notNullable(); // blocked, released
    t.integer('invalid_count').notNullable();
    t.text('reason').nullable();
    t.integer('signature_id').unsigned().nullable().references('e_signature.id');
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.index(['container_id', 'id']);
  });
  await appendOnly(knex, 'container_block');
}

export async function down(knex: Knex): Promise<void> {
  for (const t of ['container_block', 'test_handover', 'measurement_provenance', 'spectrum_fingerprint'])
    await knex.schema.dropTableIfExists(t);
}
