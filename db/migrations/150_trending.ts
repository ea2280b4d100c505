/**
 * Trending and the periodic audit-trail review (docs/trending.md):
 * - trend_baseline (append-only): the baseline period QA fixes for a material's identity method;
 *   a later row for the same method replaces it (the older rows stay on record).
 * - trend_signal (guarded): an early-warning signal of a run rule on a control chart; open until
 *   QA acknowledges it with a comment (acknowledgement set once, never changed).
 * - audit_review (append-only): QA's signed review of the audit trail for a period and a scope,
 *   with the exception lists as they stood when signed, the findings and the actions.
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly, dropGuard, guardRows } from '../protect';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('trend_baseline', (t) => {
    t.increments('id').primary();
    t.integer('material_id').unsigned().notNullable().references('material.id');
    t.integer('method_id').unsigned().notNullable().references('identity_method.id');
    t.datetime('period_from', { precision: 3 }).notNullable();
    t.datetime('period_to', { precision: 3 }).notNullable();
    t.text('reason').notNullable();
    t.integer('fixed_by').unsigned().notNullable().references('app_user.id');
    t.datetime('fixed_at', { precision: 3 }).notNullable();
    t.index(['method_id', 'id']);
  });
  await appendOnly(knex, 'trend_baseline');

  await knex.schema.createTable('trend_signal', (t) => {
    t.increments('id').primary();
    t.integer('material_id').unsigned().notNullable().references('material.id');
    t.integer('method_id').unsigned().notNullable().references('identity_method.id');
    t.string('metric', 32).notNullable(); // correlation, derivative-correlation, band-shift
    t.string('scope_kind', 16).notNullable(); // all, source, instrument, operator
    t.string('scope_value', 160).notNullable(); // '' for all; supplier name; instrument or user id
    t.string('scope_label', 200).notNullable();
    t.string('rule', 40).notNullable();
    t.integer('measurement_id').unsigned().notNullable().references('measurement.id'); // the signal point
    t.text('point_ids').notNullable(); // JSON measurement ids forming the pattern
    t.double('value').notNullable();
    t.text('limits').notNullable(); // JSON Limits at the time of the signal
    t.text('detail').notNullable();
    t.string('status', 16).notNullable(); // open, acknowledged
    t.datetime('raised_at', { precision: 3 }).notNullable();
    t.integer('acknowledged_by').unsigned().nullable().references('app_user.id');
    t.datetime('acknowledged_at', { precision: 3 }).nullable();
    t.text('ack_comment').nullable();
    t.unique(['method_id', 'metric', 'scope_kind', 'scope_value', 'rule', 'measurement_id'], {
      indexName: 'trend_signal_once',
    });
    t.index(['status', 'material_id']);
  });
  await guardRows(knex, {
    table: 'trend_signal',
    fixed: [
      'id',
      'material_id',
      'method_id',
      'metric',
      'scope_kind',
      'scope_value',
      'scope_label',
      'rule',
      'measurement_id',
      'point_ids',
      'value',
      'limits',
      'detail',
      'raised_at',
    ],
    setOnce: ['acknowledged_by', 'acknowledged_at', 'ack_comment'],
    states: [
      {
        column: 'status',
        transitions: [['open', 'acknowledged']],
        frozen: [{ states: ['acknowledged'], except: [] }],
        requires: { acknowledged: ['acknowledged_by', 'acknowledged_at', 'ack_comment'] },
      },
    ],
  });

  await knex.schema.createTable('audit_review', (t) => {
    t.increments('id').primary();
    t.string('number', 40).notNullable().unique(); // ATR-2026-001
    t.date('period_from').notNullable();
    t.date('period_to').notNullable();
    t.text('scope').notNullable(); // JSON list of exception categories reviewed
    t.text('exceptions', 'longtext').notNullable(); // JSON snapshot of the exception lists
    t.text('findings').notNullable();
    t.text('actions').notNullable();
    t.integer('reviewed_by').unsigned().notNullable().references('app_user.id');
    t.datetime('reviewed_at', { precision: 3 }).notNullable();
    t.index(['period_to']);
  });
  await appendOnly(knex, 'audit_review');
}

export async function down(knex: Knex): Promise<void> {
  await dropAppendOnly(knex, 'audit_review');
  await knex.schema.dropTableIfExists('audit_review');
  await dropGuard(knex, 'trend_signal');
  await knex.schema.dropTableIfExists('trend_signal');
  await dropAppendOnly(knex, 'trend_baseline');
  await knex.schema.dropTableIfExists('trend_baseline');
}
