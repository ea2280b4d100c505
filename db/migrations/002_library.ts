/**
 * Reference library: materials (grades), versioned identity methods, reference spectra,
 * instruments with versioned check specifications and their instrument checks.
 * Nothing here is deleted: status columns and superseding rows carry the history.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('material', (t) => {
    t.increments('id').primary();
    t.string('code', 40).notNullable().unique();
    t.string('name', 160).notNullable();
    t.string('grade', 120).notNullable().defaultTo('');
    t.string('monograph_ref', 200).notNullable().defaultTo('');
    t.text('techniques').notNullable(); // JSON array: mid-ir-atr, mid-ir-transmission, nir
    t.text('notes').nullable();
    t.boolean('active').notNullable().defaultTo(true);
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('updated_at', { precision: 3 }).notNullable();
  });

  await knex.schema.createTable('identity_method', (t) => {
    t.increments('id').primary();
    t.integer('material_id').unsigned().notNullable().references('material.id');
    t.integer('version').notNullable();
    t.string('status', 16).notNullable(); // draft, approved, superseded
    t.string('technique', 32).notNullable();
    t.text('params', 'longtext').notNullable(); // JSON IdentityMethod of the engine
    t.text('change_note').nullable();
    t.integer('supersedes_id').unsigned().nullable().references('identity_method.id');
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('updated_at', { precision: 3 }).notNullable();
    t.integer('approved_signature_id').unsigned().nullable().references('e_signature.id');
    t.datetime('approved_at', { precision: 3 }).nullable();
    t.unique(['material_id', 'version']);
  });

  await knex.schema.createTable('instrument', (t) => {
    t.increments('id').primary();
    t.string('name', 120).notNullable().unique();
    t.string('serial_number', 80).notNullable();
    t.string('technique', 32).notNullable(); // mid-ir, nir
    t.string('sampling', 32).notNullable(); // atr, transmission, diffuse-reflectance
    t.string('location', 160).notNullable().defaultTo('');
    t.integer('check_validity_hours').notNullable().defaultTo(24);
    t.boolean('active').notNullable().defaultTo(true);
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('updated_at', { precision: 3 }).notNullable();
  });

  // Expected polystyrene band positions and tolerances an instrument is checked against.
  await knex.schema.createTable('instrument_check_spec', (t) => {
    t.increments('id').primary();
    t.integer('instrument_id').unsigned().notNullable().references('instrument.id');
    t.integer('version').notNullable();
    t.string('kind', 32).notNullable(); // pharmacopoeia-ft, pharmacopoeia-monochromator, site
    t.text('bands').notNullable(); // JSON [{nominal, tolerance}]
    t.text('justification').nullable();
    t.string('status', 16).notNullable(); // draft, approved, superseded
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.integer('approved_signature_id').unsigned().nullable().references('e_signature.id');
    t.unique(['instrument_id', 'version']);
  });

  await knex.schema.createTable('instrument_check', (t) => {
    t.increments('id').primary();
    t.integer('instrument_id').unsigned().notNullable().references('instrument.id');
    t.integer('spec_id').unsigned().notNullable().references('instrument_check_spec.id');
    t.integer('file_id').unsigned().notNullable().references('stored_file.id');
    t.text('result', 'longtext').notNullable(); // JSON from checkPolystyrene
    t.string('verdict', 8).notNullable(); // pass, fail
    t.string('engine_version', 20).notNullable();
    t.integer('performed_by').unsigned().notNullable().references('app_user.id');
    t.datetime('performed_at', { precision: 3 }).notNullable();
    t.datetime('valid_until', { precision: 3 }).nullable(); // null when failed
    t.integer('signature_id').unsigned().nullable().references('e_signature.id');
    t.index(['instrument_id', 'performed_at']);
  });

  await knex.schema.createTable('reference_spectrum', (t) => {
    t.increments('id').primary();
    t.integer('material_id').unsigned().notNullable().references('material.id');
    t.string('code', 60).notNullable().unique(); // human identifier, e.g. REF-LAC-0003
    t.integer('file_id').unsigned().notNullable().references('stored_file.id');
    t.string('status', 16).notNullable(); // draft, approved, retired
    t.string('technique', 32).notNullable();
    t.string('supplier', 160).notNullable().defaultTo('');
    t.string('supplier_lot', 80).notNullable().defaultTo('');
    t.text('measured_how').nullable();
    t.integer('instrument_id').unsigned().nullable().references('instrument.id');
    t.text('bands', 'longtext').notNullable(); // JSON [{position, prominence, width, assignment}]
    t.text('meta').nullable(); // JSON SpectrumMeta
    t.text('specificity', 'longtext').nullable(); // JSON of the last gate result
    t.text('justification').nullable(); // written justification when the gate was overridden
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('updated_at', { precision: 3 }).notNullable();
    t.integer('approved_signature_id').unsigned().nullable().references('e_signature.id');
    t.integer('approved_method_id').unsigned().nullable().references('identity_method.id');
    t.datetime('approved_at', { precision: 3 }).nullable();
    t.integer('retired_signature_id').unsigned().nullable().references('e_signature.id');
    t.text('retire_reason').nullable();
    t.index(['material_id', 'status']);
  });
}

export async function down(knex: Knex): Promise<void> {
  for (const t of [
    'reference_spectrum',
    'instrument_check',
    'instrument_check_spec',
    'instrument',
    'identity_method',
    'material',
  ]) {
    await knex.schema.dropTableIfExists(t);
  }
}
