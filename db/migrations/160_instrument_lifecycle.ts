/**
 * Instrument lifecycle (issue 15, item 4): qualification records, the maintenance log,
 * out-of-service and back-in-service events, and check types beyond polystyrene (ATR blank,
 * noise figure, NIR wavelength accuracy and photometric noise) with their QA-approved limits.
 *
 * - instrument.service_state: 'in-service' or 'out-of-service'; every change is an
 *   instrument_service_event row with its reason (append-only).
 * - instrument_check_spec.check_type / limits and instrument_check.check_type: one versioned
 *   specification per check type; existing rows are polystyrene checks.
 * - instrument_qualification, instrument_maintenance, instrument_service_event: append-only.
 * The guards of instrument, instrument_check_spec and instrument_check are re-applied with the
 * new columns classified (db/protect.ts).
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly, guardRows, type GuardSpec } from '../protect';
import { GUARDS } from './050_record_guards';

const guardOf = (table: string): GuardSpec => {
  const g = GUARDS.find((x) => x.table === table);
  if (!g) throw new Error(`no guard for ${table}`);
  return g;
};

export function lifecycleGuards(): GuardSpec[] {
  const instrument = guardOf('instrument');
  const spec = guardOf('instrument_check_spec');
  const check = guardOf('instrument_check');
  return [
    { ...instrument, mutable: [...(instrument.mutable ?? []), 'service_state'] },
    // The check type never changes; the limits are frozen with the rest once approved.
    { ...spec, fixed: [...spec.fixed, 'check_type'], mutable: [...(spec.mutable ?? []), 'limits'] },
    { ...check, fixed: [...check.fixed, 'check_type'] },
  ];
}

export const LIFECYCLE_TABLES = ['instrument_qualification', 'instrument_maintenance', 'instrument_service_event'];

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('instrument', (t) => {
    t.string('service_state', 16).notNullable().defaultTo('in-service');
  });
  await knex.schema.alterTable('instrument_check_spec', (t) => {
    t.string('check_type', 24).notNullable().defaultTo('polystyrene');
    t.text('limits').nullable(); // JSON limits of the non-polystyrene check types
    t.index(['instrument_id', 'check_type', 'status']);
  });
  await knex.schema.alterTable('instrument_check', (t) => {
    t.string('check_type', 24).notNullable().defaultTo('polystyrene');
    t.index(['instrument_id', 'check_type', 'performed_at']);
  });

  await knex.schema.createTable('instrument_qualification', (t) => {
    t.increments('id').primary();
    t.integer('instrument_id').unsigned().notNullable().references('instrument.id');
    t.string('stage', 24).notNullable(); // iq, oq, pq, requalification
    t.string('document_ref', 160).notNullable();
    t.date('executed_from').notNullable();
    t.date('executed_to').notNullable();
    t.string('status', 32).notNullable(); // passed, passed-with-deviations, failed
    t.date('next_due').nullable();
    t.text('summary').notNullable();
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.integer('recorded_by').unsigned().notNullable().references('app_user.id');
    t.datetime('recorded_at', { precision: 3 }).notNullable();
    t.index(['instrument_id', 'recorded_at']);
  });
  await knex.schema.createTable('instrument_maintenance', (t) => {
    t.increments('id').primary();
    t.integer('instrument_id').unsigned().notNullable().references('instrument.id');
    t.string('kind', 24).notNullable(); // preventive, repair, part-replaced, software, other
    t.date('performed_on').notNullable();
    t.string('performed_by_text', 160).notNullable(); // engineer or service company, as written
    t.text('description').notNullable();
    t.integer('recorded_by').unsigned().notNullable().references('app_user.id');
    t.datetime('recorded_at', { precision: 3 }).notNullable();
    t.index(['instrument_id', 'performed_on']);
  });
  await knex.schema.createTable('instrument_service_event', (t) => {
    t.increments('id').primary();
    t.integer('instrument_id').unsigned().notNullable().references('instrument.id');
    t.string('state', 16).notNullable(); // out-of-service, in-service
    t.text('reason').notNullable();
    t.integer('signature_id').unsigned().nullable().references('e_signature.id'); // back in service: QA signs
    t.integer('recorded_by').unsigned().notNullable().references('app_user.id');
    t.datetime('recorded_at', { precision: 3 }).notNullable();
    t.index(['instrument_id', 'recorded_at']);
  });
  for (const t of LIFECYCLE_TABLES) await appendOnly(knex, t);
  for (const g of lifecycleGuards()) await guardRows(knex, g);
}

export async function down(knex: Knex): Promise<void> {
  for (const t of LIFECYCLE_TABLES) {
    await dropAppendOnly(knex, t);
    await knex.schema.dropTableIfExists(t);
  }
  for (const g of ['instrument', 'instrument_check_spec', 'instrument_check'])
    await guardRows(knex, guardOf(g)).catch(() => undefined);
  await knex.schema.alterTable('instrument_check', (t) => {
    t.dropIndex(['instrument_id', 'check_type', 'performed_at']);
    t.dropColumn('check_type');
  });
  await knex.schema.alterTable('instrument_check_spec', (t) => {
    t.dropIndex(['instrument_id', 'check_type', 'status']);
    t.dropColumn('check_type');
    t.dropColumn('limits');
  });
  await knex.schema.alterTable('instrument', (t) => t.dropColumn('service_state'));
}
