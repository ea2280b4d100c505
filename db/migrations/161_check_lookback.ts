/**
 * Failed-check look-back (issue 15, item 5). When an instrument check fails, Drumline opens an
 * impact assessment listing every measurement on that instrument since the last passing check of
 * the same type, and a notice for each affected lot and certificate (the certificate itself
 * never changes). QA closes the assessment with a signed decision: no impact, or retest of
 * named containers.
 * - check_impact_assessment: guarded; open -> assessed once, signed (meaning "impact-assessed").
 * - check_impact_measurement, check_impact_notice: append-only.
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly, dropGuard, guardRows, type GuardSpec } from '../protect';

export const ASSESSMENT_GUARD: GuardSpec = {
  table: 'check_impact_assessment',
  fixed: ['id', 'instrument_check_id', 'instrument_id', 'check_type', 'window_from', 'window_to', 'basis', 'opened_at'],
  setOnce: ['decision', 'retest_containers', 'rationale', 'assessed_by', 'assessed_at', 'signature_id'],
  states: [
    {
      column: 'status',
      transitions: [['open', 'assessed']],
      frozen: [{ states: ['assessed'], except: [] }],
      requires: { assessed: ['decision', 'rationale', 'assessed_by', 'assessed_at', 'signature_id'] },
    },
  ],
  signatures: { signature_id: { entityType: 'check_impact_assessment', meanings: ['impact-assessed'] } },
};

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('check_impact_assessment', (t) => {
    t.increments('id').primary();
    t.integer('instrument_check_id').unsigned().notNullable().unique().references('instrument_check.id');
    t.integer('instrument_id').unsigned().notNullable().references('instrument.id');
    t.string('check_type', 24).notNullable();
    t.datetime('window_from', { precision: 3 }).nullable(); // the last passing check; null = none ever
    t.datetime('window_to', { precision: 3 }).notNullable(); // the failed check
    t.string('basis', 24).notNullable(); // which time of a measurement was compared: acquisition-or-upload
    t.datetime('opened_at', { precision: 3 }).notNullable();
    t.string('status', 16).notNullable(); // open, assessed
    t.string('decision', 16).nullable(); // none, retest
    t.text('retest_containers').nullable(); // JSON container ids
    t.text('rationale').nullable();
    t.integer('assessed_by').unsigned().nullable().references('app_user.id');
    t.datetime('assessed_at', { precision: 3 }).nullable();
    t.integer('signature_id').unsigned().nullable().references('e_signature.id');
    t.index(['status']);
  });
  await knex.schema.createTable('check_impact_measurement', (t) => {
    t.increments('id').primary();
    t.integer('assessment_id').unsigned().notNullable().references('check_impact_assessment.id');
    t.integer('measurement_id').unsigned().notNullable().references('measurement.id');
    t.integer('test_id').unsigned().notNullable().references('identity_test.id');
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.integer('container_id').unsigned().notNullable().references('container.id');
    t.datetime('measured_at', { precision: 3 }).notNullable();
    t.unique(['assessment_id', 'measurement_id']);
  });
  await knex.schema.createTable('check_impact_notice', (t) => {
    t.increments('id').primary();
    t.integer('assessment_id').unsigned().notNullable().references('check_impact_assessment.id');
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.integer('certificate_id').unsigned().nullable().references('certificate.id');
    t.text('notice').notNullable();
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.index(['lot_id']);
    t.index(['certificate_id']);
  });
  await guardRows(knex, ASSESSMENT_GUARD);
  await appendOnly(knex, 'check_impact_measurement');
  await appendOnly(knex, 'check_impact_notice');
}

export async function down(knex: Knex): Promise<void> {
  await dropAppendOnly(knex, 'check_impact_notice');
  await dropAppendOnly(knex, 'check_impact_measurement');
  await dropGuard(knex, 'check_impact_assessment');
  for (const t of ['check_impact_notice', 'check_impact_measurement', 'check_impact_assessment'])
    await knex.schema.dropTableIfExists(t);
}
