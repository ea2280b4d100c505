/**
 * Investigations opened from a trend signal (docs/trending.md, "Investigating a signal"). QA opens an
 * investigation of a drift with an e-signature; it names the signal and the measurements of its
 * pattern, and the signal links to it. Such an investigation is about a series, not a lot: it holds
 * no lot or test (lot_id and test_id stay NULL), never invalidates a result and never rejects a lot;
 * QA records the phase I laboratory check and closes it with a signed conclusion.
 * - investigation: new columns kind (failure | trend, fixed), trend_signal_id (fixed, unique),
 *   subject (the signal and its measurements as signed at opening, fixed), opening_signature_id (set
 *   once, an "investigation-opened" signature of the row); the guard is re-applied with them, and the
 *   decision signature may also be "trend-concluded". A trend investigation never reaches
 *   retest-authorised, and a failure investigation always names its lot and test.
 * - trend_signal: new column investigation_id (set once); open -> investigated needs it.
 */
import type { Knex } from 'knex';
import { guardRows, type GuardSpec } from '../protect';
import { GUARDS } from './050_record_guards';

const base050 = GUARDS.find((g) => g.table === 'investigation')!;

export const INVESTIGATION_GUARD_155: GuardSpec = {
  ...base050,
  fixed: [...base050.fixed, 'kind', 'trend_signal_id', 'subject'],
  setOnce: [...(base050.setOnce ?? []), 'opening_signature_id'],
  signatures: {
    ...base050.signatures,
    decision_signature_id: {
      entityType: 'investigation',
      meanings: ['result-invalidated', 'failure-confirmed', 'trend-concluded'],
    },
    opening_signature_id: { entityType: 'investigation', meanings: ['investigation-opened'] },
  },
  checks: [
    {
      sql: "NOT (NEW.kind = 'trend' AND NEW.status = 'retest-authorised')",
      message: 'an investigation of a trend signal never authorises a retest',
    },
    {
      sql: "NEW.kind <> 'failure' OR (NEW.lot_id IS NOT NULL AND NEW.test_id IS NOT NULL)",
      message: 'an investigation of a failure names its lot and test',
    },
  ],
};

const SIGNAL_GUARD_150: GuardSpec = {
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
};

export const SIGNAL_GUARD_155: GuardSpec = {
  ...SIGNAL_GUARD_150,
  setOnce: [...(SIGNAL_GUARD_150.setOnce ?? []), 'investigation_id'],
  states: [
    {
      column: 'status',
      transitions: [
        ['open', 'acknowledged'],
        ['open', 'investigated'],
      ],
      frozen: [{ states: ['acknowledged', 'investigated'], except: [] }],
      requires: {
        acknowledged: ['acknowledged_by', 'acknowledged_at', 'ack_comment'],
        investigated: ['investigation_id'],
      },
    },
  ],
};

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('investigation', (t) => {
    t.string('kind', 16).notNullable().defaultTo('failure');
    t.integer('trend_signal_id').unsigned().nullable().unique().references('trend_signal.id');
    t.text('subject', 'longtext').nullable();
    t.integer('opening_signature_id').unsigned().nullable().references('e_signature.id');
  });
  await knex.raw('ALTER TABLE investigation MODIFY lot_id INT UNSIGNED NULL, MODIFY test_id INT UNSIGNED NULL');
  await guardRows(knex, INVESTIGATION_GUARD_155);

  await knex.schema.alterTable('trend_signal', (t) => {
    t.integer('investigation_id').unsigned().nullable().references('investigation.id');
  });
  await guardRows(knex, SIGNAL_GUARD_155);
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('trend_signal', (t) => {
    t.dropForeign(['investigation_id']);
    t.dropColumn('investigation_id');
  });
  await guardRows(knex, SIGNAL_GUARD_150);
  await knex.schema.alterTable('investigation', (t) => {
    t.dropForeign(['trend_signal_id']);
    t.dropForeign(['opening_signature_id']);
    t.dropUnique(['trend_signal_id']);
    t.dropColumn('kind');
    t.dropColumn('trend_signal_id');
    t.dropColumn('subject');
    t.dropColumn('opening_signature_id');
  });
  await knex.raw('ALTER TABLE investigation MODIFY lot_id INT UNSIGNED NOT NULL, MODIFY test_id INT UNSIGNED NOT NULL');
  await guardRows(knex, base050);
}
