/**
 * Receipt and testing: lots, containers, test attempts, measurements, investigations,
 * identity certificates. A re-measurement or retest adds rows; nothing is overwritten.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('lot', (t) => {
    t.increments('id').primary();
    t.string('lot_number', 40).notNullable().unique(); // internal, e.g. RM-2026-00042
    t.integer('material_id').unsigned().notNullable().references('material.id');
    t.string('supplier', 160).notNullable();
    t.string('supplier_lot', 80).notNullable();
    t.integer('container_count').notNullable();
    t.date('received_date').notNullable();
    t.text('notes').nullable();
    t.string('status', 16).notNullable(); // quarantine, released, rejected
    t.string('identity_status', 24).notNullable(); // awaiting-testing, testing, awaiting-verification, passed, failed, rejected
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('updated_at', { precision: 3 }).notNullable();
    t.index(['identity_status']);
  });

  await knex.schema.createTable('container', (t) => {
    t.increments('id').primary();
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.integer('seq').notNullable();
    t.string('label', 60).notNullable().unique(); // lot number + sequence, e.g. RM-2026-00042-007
    t.unique(['lot_id', 'seq']);
  });

  // One test attempt of a lot: the operator performs it, a second person verifies or returns it.
  await knex.schema.createTable('identity_test', (t) => {
    t.increments('id').primary();
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.integer('attempt').notNullable();
    t.string('status', 24).notNullable(); // in-progress, awaiting-verification, verified, returned
    t.integer('method_id').unsigned().notNullable().references('identity_method.id');
    t.integer('instrument_id').unsigned().nullable().references('instrument.id');
    t.integer('performed_by').unsigned().nullable().references('app_user.id');
    t.integer('performed_signature_id').unsigned().nullable().references('e_signature.id');
    t.integer('verified_by').unsigned().nullable().references('app_user.id');
    t.integer('verified_signature_id').unsigned().nullable().references('e_signature.id');
    t.text('returned_reason').nullable();
    t.integer('returned_signature_id').unsigned().nullable().references('e_signature.id');
    t.integer('retest_of_investigation_id').unsigned().nullable();
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('updated_at', { precision: 3 }).notNullable();
    t.integer('row_version').notNullable().defaultTo(0); // optimistic lock for signing
    t.unique(['lot_id', 'attempt']);
  });

  await knex.schema.createTable('measurement', (t) => {
    t.increments('id').primary();
    t.integer('test_id').unsigned().notNullable().references('identity_test.id');
    t.integer('container_id').unsigned().notNullable().references('container.id');
    t.integer('file_id').unsigned().notNullable().references('stored_file.id');
    t.integer('instrument_id').unsigned().notNullable().references('instrument.id');
    t.integer('instrument_check_id').unsigned().notNullable().references('instrument_check.id');
    t.integer('method_id').unsigned().notNullable().references('identity_method.id');
    t.text('reference_ids').notNullable(); // JSON array of reference_spectrum ids used
    t.string('verdict', 8).notNullable(); // pass, fail, invalid
    t.double('match_score').nullable();
    t.text('result', 'longtext').notNullable(); // JSON IdentityResult of the engine
    t.string('engine_version', 20).notNullable();
    t.integer('authorised_by_investigation_id').unsigned().nullable();
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.index(['container_id', 'id']);
    t.index(['test_id']);
  });

  await knex.schema.createTable('investigation', (t) => {
    t.increments('id').primary();
    t.string('number', 40).notNullable().unique();
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.integer('test_id').unsigned().notNullable().references('identity_test.id');
    t.string('status', 24).notNullable(); // open, phase1-recorded, retest-authorised, confirmed, closed
    t.text('failing', 'longtext').notNullable(); // JSON [{containerId, label, measurementId, score, hint:[...]}]
    t.text('phase1', 'longtext').nullable(); // JSON laboratory check record
    t.string('decision', 24).nullable(); // invalidated, confirmed
    t.text('justification').nullable();
    t.text('retest_containers').nullable(); // JSON container ids authorised for retest
    t.integer('opened_by').unsigned().nullable().references('app_user.id');
    t.datetime('opened_at', { precision: 3 }).notNullable();
    t.integer('decided_by').unsigned().nullable().references('app_user.id');
    t.integer('decision_signature_id').unsigned().nullable().references('e_signature.id');
    t.datetime('closed_at', { precision: 3 }).nullable();
    t.datetime('updated_at', { precision: 3 }).notNullable();
  });

  await knex.schema.createTable('certificate', (t) => {
    t.increments('id').primary();
    t.string('number', 40).notNullable().unique();
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.integer('test_id').unsigned().notNullable().references('identity_test.id');
    t.integer('supersedes_id').unsigned().nullable().references('certificate.id');
    t.string('sha256', 64).notNullable();
    t.integer('size').unsigned().notNullable();
    t.binary('pdf').notNullable();
    t.string('signer_fingerprint', 64).notNullable();
    t.integer('issued_by').unsigned().nullable().references('app_user.id');
    t.datetime('issued_at', { precision: 3 }).notNullable();
    t.index(['lot_id']);
    t.index(['sha256']);
  });
  await knex.raw('ALTER TABLE certificate MODIFY pdf LONGBLOB NOT NULL');
}

export async function down(knex: Knex): Promise<void> {
  for (const t of ['certificate', 'investigation', 'measurement', 'identity_test', 'container', 'lot']) {
    await knex.schema.dropTableIfExists(t);
  }
}
