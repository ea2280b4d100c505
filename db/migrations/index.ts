/**
 * The ordered list of migrations. Statically imported so that tsx, vitest and the server
 * all run them the same way (knex's directory loader cannot read .ts under vitest).
 * To add a migration: create NNN_name.ts with up/down and append it here.
 */
import type { Knex } from 'knex';
import * as m001 from './001_core';
import * as m002 from './002_library';
import * as m003 from './003_testing';
import * as m006 from './006_certificates';
import * as m007 from './007_audit_indexes';
import * as m008 from './008_job_lease';
import * as m050 from './050_record_guards';
import * as m051 from './051_role_grants';
import * as m052 from './052_integrity';
import * as m060 from './060_password_history';
import * as m061 from './061_sign_in_rate';
import * as m100 from './100_provenance';
import * as m110 from './110_method_control';
import * as m120 from './120_certificate_numbers';
import * as m121 from './121_audit_anchor';
import * as m130 from './130_mail_claim';
import * as m140 from './140_suppliers';
import * as m141 from './141_material_profile';
import * as m142 from './142_sampling';
import * as m143 from './143_disposition';
import * as m144 from './144_integration';
import * as m150 from './150_trending';
import * as m155 from './155_trend_investigation';
import * as m156 from './156_audit_review_reminder';
import * as m160 from './160_instrument_lifecycle';
import * as m161 from './161_check_lookback';
import * as m145 from './145_retest';
import * as m163 from './163_folder_intake';
import * as m170 from './170_role_grant_seal';

interface Migration {
  up(knex: Knex): Promise<void>;
  down(knex: Knex): Promise<void>;
}

export const migrations: [string, Migration][] = [
  ['001_core', m001],
  ['002_library', m002],
  ['003_testing', m003],
  ['006_certificates', m006],
  ['007_audit_indexes', m007],
  ['008_job_lease', m008],
  ['050_record_guards', m050],
  ['051_role_grants', m051],
  ['052_integrity', m052],
  ['060_password_history', m060],
  ['061_sign_in_rate', m061],
  ['100_provenance', m100],
  ['110_method_control', m110],
  ['120_certificate_numbers', m120],
  ['121_audit_anchor', m121],
  ['130_mail_claim', m130],
  ['140_suppliers', m140],
  ['141_material_profile', m141],
  ['142_sampling', m142],
  ['143_disposition', m143],
  ['144_integration', m144],
  ['150_trending', m150],
  ['155_trend_investigation', m155],
  ['156_audit_review_reminder', m156],
  ['160_instrument_lifecycle', m160],
  ['161_check_lookback', m161],
  ['145_retest', m145],
  ['163_folder_intake', m163],
  ['170_role_grant_seal', m170],
];

export const migrationSource: Knex.MigrationSource<[string, Migration]> = {
  getMigrations: async () => migrations,
  getMigrationName: (m) => m[0],
  getMigration: async (m) => m[1],
};

/*
 * Every table is classified exactly once (tests/api/db-protection.test.ts fails for a table that is
 * not, so a table added later must be classified here). The class decides the runtime account's
 * grants (db/migrate.ts) and which triggers the test expects (db/protect.ts):
 * - append-only: SELECT, INSERT; triggers `<table>_no_update` and `<table>_no_delete` (appendOnly()).
 * - guarded: SELECT, INSERT, UPDATE; a guard trigger `<table>_guard_update` that permits only the
 *   allowed changes and `<table>_no_delete` (guardRows()).
 * - operational: SELECT, INSERT, UPDATE, DELETE; state that is not a GMP record (sessions, mail
 *   queue, leases), each with why.
 */

/** Tables the runtime account may only read and append to (no UPDATE, no DELETE). */
export const appendOnlyTables = [
  'audit_event',
  'e_signature',
  'stored_file',
  'certificate',
  'measurement',
  'container',
  'role_request',
  'role_decision',
  'role_grant',
  'integrity_alert',
  'integrity_alert_record',
  'integrity_signoff',
  'password_history',
  'gate_override',
  'gate_override_confirmation',
  'method_approval',
  'material_ir_suitability',
  'attempt_pin',
  'spectrum_fingerprint',
  'measurement_provenance',
  'test_handover',
  'container_block',
  'certificate_number',
  'certificate_issue_failure',
  'audit_chain_key',
  'audit_checkpoint',
  'trend_baseline',
  'audit_review',
  'audit_review_reminder',
  'instrument_qualification',
  'instrument_maintenance',
  'instrument_service_event',
  'check_impact_measurement',
  'check_impact_notice',
  'supplier',
  'material_source',
  'source_status',
  'material_profile',
  'line_clearance',
  'sampling_record',
  'sampled_container',
  'container_status',
  'lot_check',
  'lot_disposition',
  'lot_retest',
  'instrument_intake_setting',
  'folder_acquisition',
  'folder_acquisition_event',
];

/** GMP records with a life cycle: only the permitted changes, never deleted (db/protect.ts guardRows). */
export const guardedTables = [
  'identity_method',
  'reference_spectrum',
  'instrument_check_spec',
  'instrument_check',
  'lot',
  'identity_test',
  'investigation',
  'material',
  'instrument',
  'app_user',
  'certificate_counter',
  'trend_signal',
  'check_impact_assessment',
  'machine_account',
  'webhook_endpoint',
];

/** State that is not a GMP record: the runtime account may change and delete it. */
export const operationalTables: Record<string, string> = {
  user_session: 'sign-in sessions; ended sessions are deleted (sign-in and sign-out are audit events)',
  mail_outbox: 'delivery queue of e-mail; the GMP event that caused a mail is in the audit trail',
  job_lease: 'which app server runs a background job',
  audit_head: 'the single row that serialises audit appends; the chain check compares it with the trail',
  integrity_run:
    'progress counters of an integrity sweep; its findings are append-only alerts and its start and end are audit events',
  audit_chain_run: 'progress counters of a full audit chain check; its request and its result are audit events',
  webhook_delivery:
    'outbox of webhook deliveries (attempts, back-off, delivery state); the GMP event that caused each is in the audit trail',
  sign_in_rate:
    'per-address sign-in counters of the rate limit (shared by all app servers); refused attempts are audit events',
};
