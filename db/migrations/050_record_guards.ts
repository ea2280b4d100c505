/**
 * Approved and signed records are immutable in the database itself (docs/compliance.md, "What
 * protects what"). Before this migration the runtime account could UPDATE an approved method's
 * parameters, an approved reference's bands or a failed instrument check's verdict, and the
 * "append-only" raw files and measurements had no trigger at all.
 *
 * - stored_file, measurement and container become append-only for every account (triggers; the
 *   runtime account holds only SELECT and INSERT on them, db/migrations/index.ts).
 * - Records with a life cycle get a guard trigger (db/protect.ts): what never changes, what is
 *   set once, which status changes are permitted, what a status needs (its signature), and which
 *   signature a signature column may point to. Every deletion is refused; the runtime account holds
 *   no DELETE on them.
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly, dropGuard, guardRows, type GuardSpec } from '../protect';

const APPEND_ONLY = ['stored_file', 'measurement', 'container'];

export const GUARDS: GuardSpec[] = [
  {
    table: 'identity_method',
    fixed: ['id', 'material_id', 'version', 'supersedes_id', 'created_by', 'created_at'],
    setOnce: ['approved_signature_id', 'approved_at'],
    mutable: ['technique', 'params', 'change_note', 'updated_at'],
    states: [
      {
        column: 'status',
        transitions: [
          ['draft', 'approved'],
          ['approved', 'superseded'],
        ],
        frozen: [
          { states: ['approved', 'superseded'], except: ['updated_at', 'approved_signature_id', 'approved_at'] },
        ],
        requires: { approved: ['approved_signature_id', 'approved_at'] },
      },
    ],
    signatures: { approved_signature_id: { entityType: 'identity_method', meanings: ['approved'] } },
  },
  {
    table: 'reference_spectrum',
    fixed: ['id', 'material_id', 'code', 'file_id', 'technique', 'created_by', 'created_at'],
    setOnce: ['approved_signature_id', 'approved_method_id', 'approved_at', 'retired_signature_id', 'retire_reason'],
    mutable: [
      'supplier',
      'supplier_lot',
      'measured_how',
      'instrument_id',
      'bands',
      'meta',
      'specificity',
      'justification',
      'updated_at',
    ],
    states: [
      {
        column: 'status',
        transitions: [
          ['draft', 'approved'],
          ['draft', 'retired'],
          ['approved', 'retired'],
        ],
        frozen: [
          {
            states: ['approved', 'retired'],
            except: ['updated_at', 'approved_signature_id', 'retired_signature_id', 'retire_reason'],
          },
        ],
        requires: {
          approved: ['approved_signature_id', 'approved_method_id'],
          retired: ['retired_signature_id', 'retire_reason'],
        },
      },
    ],
    signatures: {
      approved_signature_id: {
        entityType: 'reference_spectrum',
        meanings: ['approved', 'approved-with-justification'],
      },
      retired_signature_id: { entityType: 'reference_spectrum', meanings: ['retired'] },
    },
  },
  {
    table: 'instrument_check_spec',
    fixed: ['id', 'instrument_id', 'version', 'created_by', 'created_at'],
    setOnce: ['approved_signature_id'],
    mutable: ['kind', 'bands', 'justification'],
    states: [
      {
        column: 'status',
        transitions: [
          ['draft', 'approved'],
          ['approved', 'superseded'],
        ],
        frozen: [{ states: ['approved', 'superseded'], except: ['approved_signature_id'] }],
        requires: { approved: ['approved_signature_id'] },
      },
    ],
    signatures: { approved_signature_id: { entityType: 'instrument_check_spec', meanings: ['approved'] } },
  },
  {
    // A recorded check never changes; only its signature is attached in the recording transaction.
    table: 'instrument_check',
    fixed: [
      'id',
      'instrument_id',
      'spec_id',
      'file_id',
      'result',
      'verdict',
      'engine_version',
      'performed_by',
      'performed_at',
      'valid_until',
    ],
    setOnce: ['signature_id'],
    signatures: { signature_id: { entityType: 'instrument_check', meanings: ['instrument-check'] } },
  },
  {
    table: 'lot',
    fixed: [
      'id',
      'lot_number',
      'material_id',
      'supplier',
      'supplier_lot',
      'container_count',
      'received_date',
      'notes',
      'created_by',
      'created_at',
    ],
    mutable: ['updated_at', 'certificate_id'],
    states: [
      {
        column: 'identity_status',
        transitions: [
          ['awaiting-testing', 'testing'],
          ['retest-authorised', 'testing'],
          ['testing', 'awaiting-verification'],
          ['awaiting-verification', 'passed'],
          ['awaiting-verification', 'failed'],
          ['awaiting-verification', 'testing'],
          ['awaiting-verification', 'retest-authorised'],
          ['failed', 'retest-authorised'],
          ['failed', 'rejected'],
        ],
        frozen: [
          { states: ['passed'], except: ['updated_at', 'certificate_id', 'status'] },
          { states: ['rejected'], except: ['updated_at'] },
        ],
      },
      {
        column: 'status',
        transitions: [
          ['quarantine', 'rejected'],
          ['quarantine', 'released'],
        ],
      },
    ],
    checks: [
      {
        sql: "NOT (NEW.status = 'released') OR OLD.status = 'released' OR NEW.identity_status = 'passed'",
        message: 'only a lot whose identity passed can be released',
      },
      {
        sql: "NOT (NEW.status = 'rejected') OR OLD.status = 'rejected' OR NEW.identity_status = 'rejected'",
        message: 'a lot is rejected together with its identity status',
      },
      {
        sql:
          'NEW.certificate_id <=> OLD.certificate_id OR (NEW.certificate_id IS NOT NULL AND ' +
          'EXISTS (SELECT 1 FROM certificate c WHERE c.id = NEW.certificate_id AND c.lot_id = NEW.id))',
        message: 'certificate_id must name a certificate of this lot',
      },
    ],
  },
  {
    table: 'identity_test',
    fixed: ['id', 'lot_id', 'attempt', 'retest_of_investigation_id', 'created_by', 'created_at'],
    setOnce: [
      'performed_by',
      'performed_signature_id',
      'verified_by',
      'verified_signature_id',
      'returned_reason',
      'returned_signature_id',
    ],
    mutable: ['method_id', 'instrument_id', 'updated_at', 'row_version'],
    states: [
      {
        column: 'status',
        transitions: [
          ['in-progress', 'awaiting-verification'],
          ['awaiting-verification', 'verified'],
          ['awaiting-verification', 'returned'],
        ],
        frozen: [
          {
            states: ['awaiting-verification'],
            except: [
              'verified_by',
              'verified_signature_id',
              'returned_reason',
              'returned_signature_id',
              'updated_at',
              'row_version',
            ],
          },
          { states: ['verified', 'returned'], except: [] },
        ],
        requires: {
          'awaiting-verification': ['performed_by', 'performed_signature_id'],
          verified: ['verified_by', 'verified_signature_id'],
          returned: ['returned_reason', 'returned_signature_id'],
        },
      },
    ],
    signatures: {
      performed_signature_id: { entityType: 'identity_test', meanings: ['performed'] },
      verified_signature_id: { entityType: 'identity_test', meanings: ['verified'] },
      returned_signature_id: { entityType: 'identity_test', meanings: ['returned'] },
    },
  },
  {
    table: 'investigation',
    fixed: ['id', 'number', 'lot_id', 'test_id', 'failing', 'opened_by', 'opened_at'],
    setOnce: [
      'phase1',
      'decision',
      'justification',
      'retest_containers',
      'decided_by',
      'decision_signature_id',
      'closed_at',
    ],
    mutable: ['updated_at'],
    states: [
      {
        column: 'status',
        transitions: [
          ['open', 'phase1-recorded'],
          ['phase1-recorded', 'retest-authorised'],
          ['phase1-recorded', 'closed'],
          ['retest-authorised', 'closed'],
        ],
        frozen: [{ states: ['closed'], except: [] }],
        requires: {
          'phase1-recorded': ['phase1'],
          'retest-authorised': ['decision', 'decision_signature_id', 'retest_containers'],
          closed: ['closed_at'],
        },
      },
    ],
    signatures: {
      decision_signature_id: { entityType: 'investigation', meanings: ['result-invalidated', 'failure-confirmed'] },
    },
  },
  {
    // Master data, changed by QA with a reason in the audit trail; the code printed on records never changes.
    table: 'material',
    fixed: ['id', 'code', 'created_by', 'created_at'],
    mutable: ['name', 'grade', 'monograph_ref', 'techniques', 'notes', 'active', 'updated_at'],
  },
  {
    // Master data; the technique decides which checks and methods apply, so it never changes.
    table: 'instrument',
    fixed: ['id', 'technique', 'created_by', 'created_at'],
    mutable: ['name', 'serial_number', 'sampling', 'location', 'check_validity_hours', 'active', 'updated_at'],
  },
];

export async function up(knex: Knex): Promise<void> {
  for (const t of APPEND_ONLY) await appendOnly(knex, t);
  for (const g of GUARDS) await guardRows(knex, g);
}

export async function down(knex: Knex): Promise<void> {
  for (const g of GUARDS) await dropGuard(knex, g.table);
  for (const t of APPEND_ONLY) await dropAppendOnly(knex, t);
}
