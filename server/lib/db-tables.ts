/**
 * Row types of every table, generated from the migrated schema by `npm run db:types` (db/table-types.ts;
 * docs/architecture.md, "Typed tables"). Do not edit: tests/api/db-types.test.ts fails when this file
 * and the schema differ. `Row` is what a select returns, `Insert` what an insert takes.
 */
import type { Knex } from 'knex';

export interface AppUserRow {
  id: number;
  username: string;
  full_name: string;
  email: string;
  password_hash: string;
  roles: string;
  must_change_password: number;
  failed_attempts: number;
  locked_until: Date | null;
  active: number;
  password_changed_at: Date | null;
  created_at: Date;
  updated_at: Date;
}

export interface AppUserInsert {
  id?: number;
  username: string;
  full_name: string;
  email: string;
  password_hash: string;
  roles: string;
  must_change_password?: number | boolean;
  failed_attempts?: number;
  locked_until?: Date | null;
  active?: number | boolean;
  password_changed_at?: Date | null;
  created_at: Date;
  updated_at: Date;
}

export interface AttemptPinRow {
  id: number;
  test_id: number;
  method_id: number;
  reference_ids: string;
  created_at: Date;
}

export interface AttemptPinInsert {
  id?: number;
  test_id: number;
  method_id: number;
  reference_ids: string;
  created_at: Date;
}

export interface AuditChainKeyRow {
  id: number;
  key_id: string;
  first_event_id: number;
  recorded_at: Date;
}

export interface AuditChainKeyInsert {
  id?: number;
  key_id: string;
  first_event_id: number;
  recorded_at: Date;
}

export interface AuditChainRunRow {
  id: number;
  requested_by: number | null;
  requested_at: Date;
  status: string;
  started_at: Date | null;
  finished_at: Date | null;
  total: number;
  checked: number;
  result: string | null;
  error: string | null;
}

export interface AuditChainRunInsert {
  id?: number;
  requested_by?: number | null;
  requested_at: Date;
  status: string;
  started_at?: Date | null;
  finished_at?: Date | null;
  total?: number;
  checked?: number;
  result?: string | null;
  error?: string | null;
}

export interface AuditCheckpointRow {
  id: number;
  event_count: number;
  head_hash: string;
  key_id: string | null;
  keyed_from: number | null;
  created_at: Date;
  time_stamped_at: Date | null;
  file_name: string;
  file_sha256: string;
  document: string;
}

export interface AuditCheckpointInsert {
  id?: number;
  event_count: number;
  head_hash: string;
  key_id?: string | null;
  keyed_from?: number | null;
  created_at: Date;
  time_stamped_at?: Date | null;
  file_name: string;
  file_sha256: string;
  document: string;
}

export interface AuditEventRow {
  id: number;
  occurred_at: Date;
  actor_id: number | null;
  actor_name: string;
  action: string;
  entity_type: string;
  entity_id: string | null;
  before_json: string | null;
  after_json: string | null;
  reason: string | null;
  ip: string | null;
  prev_hash: string;
  hash: string;
}

export interface AuditEventInsert {
  id: number;
  occurred_at: Date;
  actor_id?: number | null;
  actor_name: string;
  action: string;
  entity_type: string;
  entity_id?: string | null;
  before_json?: string | null;
  after_json?: string | null;
  reason?: string | null;
  ip?: string | null;
  prev_hash: string;
  hash: string;
}

export interface AuditHeadRow {
  id: number;
  last_id: number;
  last_hash: string;
  keyed_from: number | null;
  key_id: string | null;
}

export interface AuditHeadInsert {
  id: number;
  last_id: number;
  last_hash: string;
  keyed_from?: number | null;
  key_id?: string | null;
}

export interface AuditReviewRow {
  id: number;
  number: string;
  period_from: Date;
  period_to: Date;
  scope: string;
  exceptions: string;
  findings: string;
  actions: string;
  reviewed_by: number;
  reviewed_at: Date;
}

export interface AuditReviewInsert {
  id?: number;
  number: string;
  period_from: Date | string;
  period_to: Date | string;
  scope: string;
  exceptions: string;
  findings: string;
  actions: string;
  reviewed_by: number;
  reviewed_at: Date;
}

export interface AuditReviewReminderRow {
  id: number;
  due_key: string;
  after_review_id: number | null;
  interval_months: number;
  recipients: number;
  mailed_at: Date;
}

export interface AuditReviewReminderInsert {
  id?: number;
  due_key: string;
  after_review_id?: number | null;
  interval_months: number;
  recipients: number;
  mailed_at: Date;
}

export interface CertificateRow {
  id: number;
  number: string;
  lot_id: number;
  test_id: number;
  supersedes_id: number | null;
  sha256: string;
  size: number;
  pdf: Buffer;
  signer_fingerprint: string;
  issued_by: number | null;
  issued_at: Date;
  content: string | null;
  supersede_reason: string | null;
  supersede_signature_id: number | null;
}

export interface CertificateInsert {
  id?: number;
  number: string;
  lot_id: number;
  test_id: number;
  supersedes_id?: number | null;
  sha256: string;
  size: number;
  pdf: Buffer;
  signer_fingerprint: string;
  issued_by?: number | null;
  issued_at: Date;
  content?: string | null;
  supersede_reason?: string | null;
  supersede_signature_id?: number | null;
}

export interface CertificateCounterRow {
  id: number;
  year: number;
  last_seq: number;
}

export interface CertificateCounterInsert {
  id?: number;
  year: number;
  last_seq: number;
}

export interface CertificateIssueFailureRow {
  id: number;
  number_id: number;
  lot_id: number;
  problem: string;
  failed_at: Date;
}

export interface CertificateIssueFailureInsert {
  id?: number;
  number_id: number;
  lot_id: number;
  problem: string;
  failed_at: Date;
}

export interface CertificateNumberRow {
  id: number;
  number: string;
  year: number;
  seq: number;
  lot_id: number;
  test_id: number;
  supersedes_id: number | null;
  reserved_by: number | null;
  reserved_at: Date;
}

export interface CertificateNumberInsert {
  id?: number;
  number: string;
  year: number;
  seq: number;
  lot_id: number;
  test_id: number;
  supersedes_id?: number | null;
  reserved_by?: number | null;
  reserved_at: Date;
}

export interface CheckImpactAssessmentRow {
  id: number;
  instrument_check_id: number;
  instrument_id: number;
  check_type: string;
  window_from: Date | null;
  window_to: Date;
  basis: string;
  opened_at: Date;
  status: string;
  decision: string | null;
  retest_containers: string | null;
  rationale: string | null;
  assessed_by: number | null;
  assessed_at: Date | null;
  signature_id: number | null;
}

export interface CheckImpactAssessmentInsert {
  id?: number;
  instrument_check_id: number;
  instrument_id: number;
  check_type: string;
  window_from?: Date | null;
  window_to: Date;
  basis: string;
  opened_at: Date;
  status: string;
  decision?: string | null;
  retest_containers?: string | null;
  rationale?: string | null;
  assessed_by?: number | null;
  assessed_at?: Date | null;
  signature_id?: number | null;
}

export interface CheckImpactMeasurementRow {
  id: number;
  assessment_id: number;
  measurement_id: number;
  test_id: number;
  lot_id: number;
  container_id: number;
  measured_at: Date;
}

export interface CheckImpactMeasurementInsert {
  id?: number;
  assessment_id: number;
  measurement_id: number;
  test_id: number;
  lot_id: number;
  container_id: number;
  measured_at: Date;
}

export interface CheckImpactNoticeRow {
  id: number;
  assessment_id: number;
  lot_id: number;
  certificate_id: number | null;
  notice: string;
  created_at: Date;
}

export interface CheckImpactNoticeInsert {
  id?: number;
  assessment_id: number;
  lot_id: number;
  certificate_id?: number | null;
  notice: string;
  created_at: Date;
}

export interface ContainerRow {
  id: number;
  lot_id: number;
  seq: number;
  label: string;
}

export interface ContainerInsert {
  id?: number;
  lot_id: number;
  seq: number;
  label: string;
}

export interface ContainerBlockRow {
  id: number;
  container_id: number;
  test_id: number;
  event: string;
  invalid_count: number;
  reason: string | null;
  signature_id: number | null;
  created_by: number;
  created_at: Date;
}

export interface ContainerBlockInsert {
  id?: number;
  container_id: number;
  test_id: number;
  event: string;
  invalid_count: number;
  reason?: string | null;
  signature_id?: number | null;
  created_by: number;
  created_at: Date;
}

export interface ContainerStatusRow {
  id: number;
  container_id: number;
  status: string;
  reason: string | null;
  signature_id: number | null;
  changed_by: number | null;
  changed_at: Date;
}

export interface ContainerStatusInsert {
  id?: number;
  container_id: number;
  status: string;
  reason?: string | null;
  signature_id?: number | null;
  changed_by?: number | null;
  changed_at: Date;
}

export interface ESignatureRow {
  id: number;
  user_id: number;
  printed_name: string;
  meaning: string;
  entity_type: string;
  entity_id: string;
  content_hash: string;
  statement: string | null;
  signed_at: Date;
}

export interface ESignatureInsert {
  id?: number;
  user_id: number;
  printed_name: string;
  meaning: string;
  entity_type: string;
  entity_id: string;
  content_hash: string;
  statement?: string | null;
  signed_at: Date;
}

export interface FolderAcquisitionRow {
  id: number;
  instrument_id: number;
  relative_path: string;
  file_id: number;
  sha256: string;
  size: number;
  file_modified_at: Date | null;
  received_at: Date;
  acquired_text: string | null;
  acquired_at: Date | null;
  acquired_zone: string | null;
  clock_offset_seconds: number | null;
  title: string | null;
  sample_text: string | null;
  label_found: string | null;
  read_error: string | null;
}

export interface FolderAcquisitionInsert {
  id?: number;
  instrument_id: number;
  relative_path: string;
  file_id: number;
  sha256: string;
  size: number;
  file_modified_at?: Date | null;
  received_at: Date;
  acquired_text?: string | null;
  acquired_at?: Date | null;
  acquired_zone?: string | null;
  clock_offset_seconds?: number | null;
  title?: string | null;
  sample_text?: string | null;
  label_found?: string | null;
  read_error?: string | null;
}

export interface FolderAcquisitionEventRow {
  id: number;
  acquisition_id: number;
  event: string;
  code: string | null;
  reason: string | null;
  measurement_id: number | null;
  test_id: number | null;
  container_id: number | null;
  created_by: number | null;
  created_at: Date;
}

export interface FolderAcquisitionEventInsert {
  id?: number;
  acquisition_id: number;
  event: string;
  code?: string | null;
  reason?: string | null;
  measurement_id?: number | null;
  test_id?: number | null;
  container_id?: number | null;
  created_by?: number | null;
  created_at: Date;
}

export interface GateOverrideRow {
  id: number;
  entity_type: string;
  entity_id: number;
  justification: string;
  change_control: string;
  gate_sha256: string;
  gate: string;
  requested_by: number;
  signature_id: number;
  requested_at: Date;
}

export interface GateOverrideInsert {
  id?: number;
  entity_type: string;
  entity_id: number;
  justification: string;
  change_control: string;
  gate_sha256: string;
  gate: string;
  requested_by: number;
  signature_id: number;
  requested_at: Date;
}

export interface GateOverrideConfirmationRow {
  id: number;
  override_id: number;
  confirmed_by: number;
  signature_id: number;
  confirmed_at: Date;
}

export interface GateOverrideConfirmationInsert {
  id?: number;
  override_id: number;
  confirmed_by: number;
  signature_id: number;
  confirmed_at: Date;
}

export interface IdentityMethodRow {
  id: number;
  material_id: number;
  version: number;
  status: string;
  technique: string;
  params: string;
  change_note: string | null;
  supersedes_id: number | null;
  created_by: number;
  created_at: Date;
  updated_at: Date;
  approved_signature_id: number | null;
  approved_at: Date | null;
}

export interface IdentityMethodInsert {
  id?: number;
  material_id: number;
  version: number;
  status: string;
  technique: string;
  params: string;
  change_note?: string | null;
  supersedes_id?: number | null;
  created_by: number;
  created_at: Date;
  updated_at: Date;
  approved_signature_id?: number | null;
  approved_at?: Date | null;
}

export interface IdentityTestRow {
  id: number;
  lot_id: number;
  attempt: number;
  status: string;
  method_id: number;
  instrument_id: number | null;
  performed_by: number | null;
  performed_signature_id: number | null;
  verified_by: number | null;
  verified_signature_id: number | null;
  returned_reason: string | null;
  returned_signature_id: number | null;
  retest_of_investigation_id: number | null;
  created_by: number;
  created_at: Date;
  updated_at: Date;
  row_version: number;
}

export interface IdentityTestInsert {
  id?: number;
  lot_id: number;
  attempt: number;
  status: string;
  method_id: number;
  instrument_id?: number | null;
  performed_by?: number | null;
  performed_signature_id?: number | null;
  verified_by?: number | null;
  verified_signature_id?: number | null;
  returned_reason?: string | null;
  returned_signature_id?: number | null;
  retest_of_investigation_id?: number | null;
  created_by: number;
  created_at: Date;
  updated_at: Date;
  row_version?: number;
}

export interface InstrumentRow {
  id: number;
  name: string;
  serial_number: string;
  technique: string;
  sampling: string;
  location: string;
  check_validity_hours: number;
  active: number;
  created_by: number;
  created_at: Date;
  updated_at: Date;
  service_state: string;
}

export interface InstrumentInsert {
  id?: number;
  name: string;
  serial_number: string;
  technique: string;
  sampling: string;
  location?: string;
  check_validity_hours?: number;
  active?: number | boolean;
  created_by: number;
  created_at: Date;
  updated_at: Date;
  service_state?: string;
}

export interface InstrumentCheckRow {
  id: number;
  instrument_id: number;
  spec_id: number;
  file_id: number;
  result: string;
  verdict: string;
  engine_version: string;
  performed_by: number;
  performed_at: Date;
  valid_until: Date | null;
  signature_id: number | null;
  check_type: string;
}

export interface InstrumentCheckInsert {
  id?: number;
  instrument_id: number;
  spec_id: number;
  file_id: number;
  result: string;
  verdict: string;
  engine_version: string;
  performed_by: number;
  performed_at: Date;
  valid_until?: Date | null;
  signature_id?: number | null;
  check_type?: string;
}

export interface InstrumentCheckSpecRow {
  id: number;
  instrument_id: number;
  version: number;
  kind: string;
  bands: string;
  justification: string | null;
  status: string;
  created_by: number;
  created_at: Date;
  approved_signature_id: number | null;
  check_type: string;
  limits: string | null;
}

export interface InstrumentCheckSpecInsert {
  id?: number;
  instrument_id: number;
  version: number;
  kind: string;
  bands: string;
  justification?: string | null;
  status: string;
  created_by: number;
  created_at: Date;
  approved_signature_id?: number | null;
  check_type?: string;
  limits?: string | null;
}

export interface InstrumentIntakeSettingRow {
  id: number;
  instrument_id: number;
  export_folder: string | null;
  use_polling: number;
  manual_upload_allowed: number;
  time_zone: string;
  reason: string;
  set_by: number;
  created_at: Date;
}

export interface InstrumentIntakeSettingInsert {
  id?: number;
  instrument_id: number;
  export_folder?: string | null;
  use_polling: number | boolean;
  manual_upload_allowed: number | boolean;
  time_zone: string;
  reason: string;
  set_by: number;
  created_at: Date;
}

export interface InstrumentMaintenanceRow {
  id: number;
  instrument_id: number;
  kind: string;
  performed_on: Date;
  performed_by_text: string;
  description: string;
  recorded_by: number;
  recorded_at: Date;
}

export interface InstrumentMaintenanceInsert {
  id?: number;
  instrument_id: number;
  kind: string;
  performed_on: Date | string;
  performed_by_text: string;
  description: string;
  recorded_by: number;
  recorded_at: Date;
}

export interface InstrumentQualificationRow {
  id: number;
  instrument_id: number;
  stage: string;
  document_ref: string;
  executed_from: Date;
  executed_to: Date;
  status: string;
  next_due: Date | null;
  summary: string;
  signature_id: number;
  recorded_by: number;
  recorded_at: Date;
}

export interface InstrumentQualificationInsert {
  id?: number;
  instrument_id: number;
  stage: string;
  document_ref: string;
  executed_from: Date | string;
  executed_to: Date | string;
  status: string;
  next_due?: Date | string | null;
  summary: string;
  signature_id: number;
  recorded_by: number;
  recorded_at: Date;
}

export interface InstrumentServiceEventRow {
  id: number;
  instrument_id: number;
  state: string;
  reason: string;
  signature_id: number | null;
  recorded_by: number;
  recorded_at: Date;
}

export interface InstrumentServiceEventInsert {
  id?: number;
  instrument_id: number;
  state: string;
  reason: string;
  signature_id?: number | null;
  recorded_by: number;
  recorded_at: Date;
}

export interface IntegrityAlertRow {
  id: number;
  kind: string;
  subject_type: string;
  subject_id: string;
  expected: string;
  found: string;
  summary: string;
  detail: string | null;
  found_in: string;
  found_by: number | null;
  run_id: number | null;
  found_at: Date;
}

export interface IntegrityAlertInsert {
  id?: number;
  kind: string;
  subject_type: string;
  subject_id: string;
  expected: string;
  found: string;
  summary: string;
  detail?: string | null;
  found_in: string;
  found_by?: number | null;
  run_id?: number | null;
  found_at: Date;
}

export interface IntegrityAlertRecordRow {
  id: number;
  alert_id: number;
  record_type: string;
  record_id: string;
  label: string;
}

export interface IntegrityAlertRecordInsert {
  id?: number;
  alert_id: number;
  record_type: string;
  record_id: string;
  label: string;
}

export interface IntegrityRunRow {
  id: number;
  origin: string;
  requested_by: number | null;
  requested_at: Date;
  status: string;
  started_at: Date | null;
  finished_at: Date | null;
  files_total: number;
  files_checked: number;
  signatures_total: number;
  signatures_checked: number;
  certificates_checked: number;
  accounts_checked: number;
  mismatches: number;
  unchecked: string | null;
  error: string | null;
}

export interface IntegrityRunInsert {
  id?: number;
  origin: string;
  requested_by?: number | null;
  requested_at: Date;
  status: string;
  started_at?: Date | null;
  finished_at?: Date | null;
  files_total?: number;
  files_checked?: number;
  signatures_total?: number;
  signatures_checked?: number;
  certificates_checked?: number;
  accounts_checked?: number;
  mismatches?: number;
  unchecked?: string | null;
  error?: string | null;
}

export interface IntegritySignoffRow {
  id: number;
  alert_id: number;
  comment: string;
  signed_by: number;
  signature_id: number;
  signed_at: Date;
}

export interface IntegritySignoffInsert {
  id?: number;
  alert_id: number;
  comment: string;
  signed_by: number;
  signature_id: number;
  signed_at: Date;
}

export interface InvestigationRow {
  id: number;
  number: string;
  lot_id: number | null;
  test_id: number | null;
  status: string;
  failing: string;
  phase1: string | null;
  decision: string | null;
  justification: string | null;
  retest_containers: string | null;
  opened_by: number | null;
  opened_at: Date;
  decided_by: number | null;
  decision_signature_id: number | null;
  closed_at: Date | null;
  updated_at: Date;
  kind: string;
  trend_signal_id: number | null;
  subject: string | null;
  opening_signature_id: number | null;
}

export interface InvestigationInsert {
  id?: number;
  number: string;
  lot_id?: number | null;
  test_id?: number | null;
  status: string;
  failing: string;
  phase1?: string | null;
  decision?: string | null;
  justification?: string | null;
  retest_containers?: string | null;
  opened_by?: number | null;
  opened_at: Date;
  decided_by?: number | null;
  decision_signature_id?: number | null;
  closed_at?: Date | null;
  updated_at: Date;
  kind?: string;
  trend_signal_id?: number | null;
  subject?: string | null;
  opening_signature_id?: number | null;
}

export interface JobLeaseRow {
  name: string;
  holder: string;
  expires_at: Date;
  acquired_at: Date;
  last_run_at: Date | null;
  last_ok_at: Date | null;
  last_error: string | null;
}

export interface JobLeaseInsert {
  name: string;
  holder: string;
  expires_at: Date;
  acquired_at: Date;
  last_run_at?: Date | null;
  last_ok_at?: Date | null;
  last_error?: string | null;
}

export interface LineClearanceRow {
  id: number;
  lot_id: number;
  area: string;
  previous_use: string | null;
  note: string | null;
  signature_id: number;
  cleared_by: number;
  cleared_at: Date;
}

export interface LineClearanceInsert {
  id?: number;
  lot_id: number;
  area: string;
  previous_use?: string | null;
  note?: string | null;
  signature_id: number;
  cleared_by: number;
  cleared_at: Date;
}

export interface LotRow {
  id: number;
  lot_number: string;
  material_id: number;
  supplier: string;
  supplier_lot: string;
  container_count: number;
  received_date: Date;
  notes: string | null;
  status: string;
  identity_status: string;
  created_by: number | null;
  created_at: Date;
  updated_at: Date;
  certificate_id: number | null;
  supplier_id: number | null;
  manufacturer_id: number | null;
  source_id: number | null;
  source_status: string | null;
  source_conditions: string | null;
  first_delivery: number;
  sampling_plan: string | null;
  sample_count: number | null;
  retest_date: Date | null;
  disposition_id: number | null;
  erp_receipt_number: string | null;
  erp_account_id: number | null;
}

export interface LotInsert {
  id?: number;
  lot_number: string;
  material_id: number;
  supplier: string;
  supplier_lot: string;
  container_count: number;
  received_date: Date | string;
  notes?: string | null;
  status: string;
  identity_status: string;
  created_by?: number | null;
  created_at: Date;
  updated_at: Date;
  certificate_id?: number | null;
  supplier_id?: number | null;
  manufacturer_id?: number | null;
  source_id?: number | null;
  source_status?: string | null;
  source_conditions?: string | null;
  first_delivery?: number | boolean;
  sampling_plan?: string | null;
  sample_count?: number | null;
  retest_date?: Date | string | null;
  disposition_id?: number | null;
  erp_receipt_number?: string | null;
  erp_account_id?: number | null;
}

export interface LotCheckRow {
  id: number;
  lot_id: number;
  check_key: string;
  check_kind: string;
  profile_id: number;
  outcome: string;
  reference: string | null;
  note: string | null;
  signature_id: number;
  recorded_by: number;
  recorded_at: Date;
}

export interface LotCheckInsert {
  id?: number;
  lot_id: number;
  check_key: string;
  check_kind: string;
  profile_id: number;
  outcome: string;
  reference?: string | null;
  note?: string | null;
  signature_id: number;
  recorded_by: number;
  recorded_at: Date;
}

export interface LotDispositionRow {
  id: number;
  lot_id: number;
  decision: string;
  reason: string | null;
  retest_date: Date | null;
  certificate_id: number | null;
  profile_id: number | null;
  conditions: string;
  signature_id: number;
  decided_by: number;
  decided_at: Date;
}

export interface LotDispositionInsert {
  id?: number;
  lot_id: number;
  decision: string;
  reason?: string | null;
  retest_date?: Date | string | null;
  certificate_id?: number | null;
  profile_id?: number | null;
  conditions: string;
  signature_id: number;
  decided_by: number;
  decided_at: Date;
}

export interface LotRetestRow {
  id: number;
  lot_id: number;
  reopened_disposition_id: number;
  retest_date_due: Date | null;
  reason: string;
  signature_id: number;
  started_by: number;
  started_at: Date;
}

export interface LotRetestInsert {
  id?: number;
  lot_id: number;
  reopened_disposition_id: number;
  retest_date_due?: Date | string | null;
  reason: string;
  signature_id: number;
  started_by: number;
  started_at: Date;
}

export interface MachineAccountRow {
  id: number;
  name: string;
  scopes: string;
  token_hash: string;
  token_hint: string;
  created_by: number;
  created_at: Date;
  last_used_at: Date | null;
  revoked_at: Date | null;
  revoked_by: number | null;
  revoke_reason: string | null;
}

export interface MachineAccountInsert {
  id?: number;
  name: string;
  scopes: string;
  token_hash: string;
  token_hint: string;
  created_by: number;
  created_at: Date;
  last_used_at?: Date | null;
  revoked_at?: Date | null;
  revoked_by?: number | null;
  revoke_reason?: string | null;
}

export interface MailOutboxRow {
  id: number;
  to_address: string;
  subject: string;
  body: string;
  status: string;
  attempts: number;
  last_error: string | null;
  created_at: Date;
  next_attempt_at: Date;
  sent_at: Date | null;
  claimed_at: Date | null;
  claimed_by: string | null;
}

export interface MailOutboxInsert {
  id?: number;
  to_address: string;
  subject: string;
  body: string;
  status?: string;
  attempts?: number;
  last_error?: string | null;
  created_at: Date;
  next_attempt_at: Date;
  sent_at?: Date | null;
  claimed_at?: Date | null;
  claimed_by?: string | null;
}

export interface MaterialRow {
  id: number;
  code: string;
  name: string;
  grade: string;
  monograph_ref: string;
  techniques: string;
  notes: string | null;
  active: number;
  created_by: number;
  created_at: Date;
  updated_at: Date;
}

export interface MaterialInsert {
  id?: number;
  code: string;
  name: string;
  grade?: string;
  monograph_ref?: string;
  techniques: string;
  notes?: string | null;
  active?: number | boolean;
  created_by: number;
  created_at: Date;
  updated_at: Date;
}

export interface MaterialIrSuitabilityRow {
  id: number;
  material_id: number;
  suitable: number;
  replacement_test: string | null;
  reason: string;
  decided_by: number;
  signature_id: number;
  decided_at: Date;
}

export interface MaterialIrSuitabilityInsert {
  id?: number;
  material_id: number;
  suitable: number | boolean;
  replacement_test?: string | null;
  reason: string;
  decided_by: number;
  signature_id: number;
  decided_at: Date;
}

export interface MaterialProfileRow {
  id: number;
  material_id: number;
  version: number;
  retest_months: number;
  shelf_life_months: number;
  risk_class: string;
  checks: string;
  reason: string;
  signature_id: number;
  created_by: number;
  created_at: Date;
}

export interface MaterialProfileInsert {
  id?: number;
  material_id: number;
  version: number;
  retest_months: number;
  shelf_life_months: number;
  risk_class: string;
  checks: string;
  reason: string;
  signature_id: number;
  created_by: number;
  created_at: Date;
}

export interface MaterialSourceRow {
  id: number;
  material_id: number;
  supplier_id: number;
  manufacturer_id: number | null;
  manufacturer_key: number;
  created_by: number | null;
  created_at: Date;
}

export interface MaterialSourceInsert {
  id?: number;
  material_id: number;
  supplier_id: number;
  manufacturer_id?: number | null;
  manufacturer_key: number;
  created_by?: number | null;
  created_at: Date;
}

export interface MeasurementRow {
  id: number;
  test_id: number;
  container_id: number;
  file_id: number;
  instrument_id: number;
  instrument_check_id: number;
  method_id: number;
  reference_ids: string;
  verdict: string;
  match_score: number | null;
  result: string;
  engine_version: string;
  authorised_by_investigation_id: number | null;
  created_by: number;
  created_at: Date;
}

export interface MeasurementInsert {
  id?: number;
  test_id: number;
  container_id: number;
  file_id: number;
  instrument_id: number;
  instrument_check_id: number;
  method_id: number;
  reference_ids: string;
  verdict: string;
  match_score?: number | null;
  result: string;
  engine_version: string;
  authorised_by_investigation_id?: number | null;
  created_by: number;
  created_at: Date;
}

export interface MeasurementProvenanceRow {
  id: number;
  measurement_id: number;
  acquired_text: string | null;
  acquired_at: Date | null;
  acquired_judgement: string;
  instrument_text: string | null;
  stated_serial: string | null;
  serial_judgement: string;
  title: string | null;
  sample_text: string | null;
  identifier_findings: string;
  identifiers_confirmed: number;
  remeasure_reason: string | null;
  remeasure_of_measurement_id: number | null;
  created_at: Date;
}

export interface MeasurementProvenanceInsert {
  id?: number;
  measurement_id: number;
  acquired_text?: string | null;
  acquired_at?: Date | null;
  acquired_judgement: string;
  instrument_text?: string | null;
  stated_serial?: string | null;
  serial_judgement: string;
  title?: string | null;
  sample_text?: string | null;
  identifier_findings: string;
  identifiers_confirmed?: number | boolean;
  remeasure_reason?: string | null;
  remeasure_of_measurement_id?: number | null;
  created_at: Date;
}

export interface MethodApprovalRow {
  id: number;
  method_id: number;
  validation_file_id: number;
  validation_sha256: string;
  validation: string;
  first_reference_ids: string;
  gate_override_id: number | null;
  signature_id: number;
  created_at: Date;
}

export interface MethodApprovalInsert {
  id?: number;
  method_id: number;
  validation_file_id: number;
  validation_sha256: string;
  validation: string;
  first_reference_ids: string;
  gate_override_id?: number | null;
  signature_id: number;
  created_at: Date;
}

export interface PasswordHistoryRow {
  id: number;
  user_id: number;
  password_hash: string;
  set_at: Date;
}

export interface PasswordHistoryInsert {
  id?: number;
  user_id: number;
  password_hash: string;
  set_at: Date;
}

export interface ReferenceSpectrumRow {
  id: number;
  material_id: number;
  code: string;
  file_id: number;
  status: string;
  technique: string;
  supplier: string;
  supplier_lot: string;
  measured_how: string | null;
  instrument_id: number | null;
  bands: string;
  meta: string | null;
  specificity: string | null;
  justification: string | null;
  created_by: number;
  created_at: Date;
  updated_at: Date;
  approved_signature_id: number | null;
  approved_method_id: number | null;
  approved_at: Date | null;
  retired_signature_id: number | null;
  retire_reason: string | null;
}

export interface ReferenceSpectrumInsert {
  id?: number;
  material_id: number;
  code: string;
  file_id: number;
  status: string;
  technique: string;
  supplier?: string;
  supplier_lot?: string;
  measured_how?: string | null;
  instrument_id?: number | null;
  bands: string;
  meta?: string | null;
  specificity?: string | null;
  justification?: string | null;
  created_by: number;
  created_at: Date;
  updated_at: Date;
  approved_signature_id?: number | null;
  approved_method_id?: number | null;
  approved_at?: Date | null;
  retired_signature_id?: number | null;
  retire_reason?: string | null;
}

export interface RoleDecisionRow {
  id: number;
  request_id: number;
  decision: string;
  decided_by: number;
  decided_at: Date;
  reason: string | null;
  signature_id: number | null;
}

export interface RoleDecisionInsert {
  id?: number;
  request_id: number;
  decision: string;
  decided_by: number;
  decided_at: Date;
  reason?: string | null;
  signature_id?: number | null;
}

export interface RoleGrantRow {
  id: number;
  user_id: number;
  roles: string;
  kind: string;
  granted_by: number | null;
  request_id: number | null;
  decision_id: number | null;
  granted_at: Date;
  reason: string;
  previous_grant_id: number | null;
  seal: string;
}

export interface RoleGrantInsert {
  id?: number;
  user_id: number;
  roles: string;
  kind: string;
  granted_by?: number | null;
  request_id?: number | null;
  decision_id?: number | null;
  granted_at: Date;
  reason: string;
  previous_grant_id?: number | null;
  seal: string;
}

export interface RoleRequestRow {
  id: number;
  user_id: number;
  roles_before: string;
  roles_after: string;
  requested_by: number;
  requested_at: Date;
  reason: string;
}

export interface RoleRequestInsert {
  id?: number;
  user_id: number;
  roles_before: string;
  roles_after: string;
  requested_by: number;
  requested_at: Date;
  reason: string;
}

export interface SampledContainerRow {
  id: number;
  sampling_record_id: number;
  container_id: number;
  opened: number;
  sampled: number;
  resealed: number;
  note: string | null;
}

export interface SampledContainerInsert {
  id?: number;
  sampling_record_id: number;
  container_id: number;
  opened: number | boolean;
  sampled: number | boolean;
  resealed: number | boolean;
  note?: string | null;
}

export interface SamplingRecordRow {
  id: number;
  lot_id: number;
  line_clearance_id: number;
  area: string;
  sampled_at: Date;
  tool: string;
  reserve_quantity: string;
  reserve_unit: string;
  reserve_location: string;
  note: string | null;
  sampling_plan: string;
  signature_id: number;
  sampler_id: number;
  created_at: Date;
}

export interface SamplingRecordInsert {
  id?: number;
  lot_id: number;
  line_clearance_id: number;
  area: string;
  sampled_at: Date;
  tool: string;
  reserve_quantity: string;
  reserve_unit: string;
  reserve_location: string;
  note?: string | null;
  sampling_plan: string;
  signature_id: number;
  sampler_id: number;
  created_at: Date;
}

export interface SignInRateRow {
  client_key: string;
  hits: number;
  window_ends_at: Date;
}

export interface SignInRateInsert {
  client_key: string;
  hits: number;
  window_ends_at: Date;
}

export interface SourceStatusRow {
  id: number;
  source_id: number;
  status: string;
  conditions: string | null;
  sampling_plan: string;
  sampling_justification: string | null;
  effective_from: Date;
  review_by: Date | null;
  reason: string;
  signature_id: number | null;
  set_by: number | null;
  set_at: Date;
}

export interface SourceStatusInsert {
  id?: number;
  source_id: number;
  status: string;
  conditions?: string | null;
  sampling_plan: string;
  sampling_justification?: string | null;
  effective_from: Date | string;
  review_by?: Date | string | null;
  reason: string;
  signature_id?: number | null;
  set_by?: number | null;
  set_at: Date;
}

export interface SpectrumFingerprintRow {
  id: number;
  file_id: number;
  record_type: string;
  record_id: number;
  raw_sha256: string;
  decoded_sha256: string;
  points: number;
  x_low: number;
  x_high: number;
  seg1: number;
  seg2: number;
  seg3: number;
  seg4: number;
  noise: number;
  y_range: number;
  y_step: number;
  created_at: Date;
}

export interface SpectrumFingerprintInsert {
  id?: number;
  file_id: number;
  record_type: string;
  record_id: number;
  raw_sha256: string;
  decoded_sha256: string;
  points: number;
  x_low: number;
  x_high: number;
  seg1: number;
  seg2: number;
  seg3: number;
  seg4: number;
  noise: number;
  y_range: number;
  y_step: number;
  created_at: Date;
}

export interface StoredFileRow {
  id: number;
  sha256: string;
  file_name: string;
  media_type: string;
  size: number;
  data: Buffer;
  uploaded_by: number | null;
  uploaded_at: Date;
}

export interface StoredFileInsert {
  id?: number;
  sha256: string;
  file_name: string;
  media_type: string;
  size: number;
  data: Buffer;
  uploaded_by?: number | null;
  uploaded_at: Date;
}

export interface SupplierRow {
  id: number;
  code: string;
  name: string;
  kind: string;
  address: string;
  note: string | null;
  created_by: number | null;
  created_at: Date;
}

export interface SupplierInsert {
  id?: number;
  code: string;
  name: string;
  kind: string;
  address?: string;
  note?: string | null;
  created_by?: number | null;
  created_at: Date;
}

export interface TestHandoverRow {
  id: number;
  test_id: number;
  from_user: number;
  to_user: number;
  reason: string;
  created_by: number;
  created_at: Date;
}

export interface TestHandoverInsert {
  id?: number;
  test_id: number;
  from_user: number;
  to_user: number;
  reason: string;
  created_by: number;
  created_at: Date;
}

export interface TrendBaselineRow {
  id: number;
  material_id: number;
  method_id: number;
  period_from: Date;
  period_to: Date;
  reason: string;
  fixed_by: number;
  fixed_at: Date;
}

export interface TrendBaselineInsert {
  id?: number;
  material_id: number;
  method_id: number;
  period_from: Date;
  period_to: Date;
  reason: string;
  fixed_by: number;
  fixed_at: Date;
}

export interface TrendSignalRow {
  id: number;
  material_id: number;
  method_id: number;
  metric: string;
  scope_kind: string;
  scope_value: string;
  scope_label: string;
  rule: string;
  measurement_id: number;
  point_ids: string;
  value: number;
  limits: string;
  detail: string;
  status: string;
  raised_at: Date;
  acknowledged_by: number | null;
  acknowledged_at: Date | null;
  ack_comment: string | null;
  investigation_id: number | null;
}

export interface TrendSignalInsert {
  id?: number;
  material_id: number;
  method_id: number;
  metric: string;
  scope_kind: string;
  scope_value: string;
  scope_label: string;
  rule: string;
  measurement_id: number;
  point_ids: string;
  value: number;
  limits: string;
  detail: string;
  status: string;
  raised_at: Date;
  acknowledged_by?: number | null;
  acknowledged_at?: Date | null;
  ack_comment?: string | null;
  investigation_id?: number | null;
}

export interface UserSessionRow {
  id: string;
  user_id: number;
  created_at: Date;
  last_seen_at: Date;
  expires_at: Date;
  signed_once: number;
  ip: string | null;
}

export interface UserSessionInsert {
  id: string;
  user_id: number;
  created_at: Date;
  last_seen_at: Date;
  expires_at: Date;
  signed_once?: number | boolean;
  ip?: string | null;
}

export interface WebhookDeliveryRow {
  id: number;
  endpoint_id: number;
  message_id: string;
  event_type: string;
  payload: string;
  status: string;
  attempts: number;
  next_attempt_at: Date;
  last_status_code: number | null;
  last_error: string | null;
  created_at: Date;
  delivered_at: Date | null;
}

export interface WebhookDeliveryInsert {
  id?: number;
  endpoint_id: number;
  message_id: string;
  event_type: string;
  payload: string;
  status?: string;
  attempts?: number;
  next_attempt_at: Date;
  last_status_code?: number | null;
  last_error?: string | null;
  created_at: Date;
  delivered_at?: Date | null;
}

export interface WebhookEndpointRow {
  id: number;
  name: string;
  url: string;
  secret: string;
  events: string;
  created_by: number;
  created_at: Date;
  deactivated_at: Date | null;
  deactivated_by: number | null;
}

export interface WebhookEndpointInsert {
  id?: number;
  name: string;
  url: string;
  secret: string;
  events: string;
  created_by: number;
  created_at: Date;
  deactivated_at?: Date | null;
  deactivated_by?: number | null;
}

declare module 'knex/types/tables' {
  interface Tables {
    app_user: Knex.CompositeTableType<AppUserRow, AppUserInsert, Partial<AppUserInsert>>;
    attempt_pin: Knex.CompositeTableType<AttemptPinRow, AttemptPinInsert, never>;
    audit_chain_key: Knex.CompositeTableType<AuditChainKeyRow, AuditChainKeyInsert, never>;
    audit_chain_run: Knex.CompositeTableType<AuditChainRunRow, AuditChainRunInsert, Partial<AuditChainRunInsert>>;
    audit_checkpoint: Knex.CompositeTableType<AuditCheckpointRow, AuditCheckpointInsert, never>;
    audit_event: Knex.CompositeTableType<AuditEventRow, AuditEventInsert, never>;
    audit_head: Knex.CompositeTableType<AuditHeadRow, AuditHeadInsert, Partial<AuditHeadInsert>>;
    audit_review: Knex.CompositeTableType<AuditReviewRow, AuditReviewInsert, never>;
    audit_review_reminder: Knex.CompositeTableType<AuditReviewReminderRow, AuditReviewReminderInsert, never>;
    certificate: Knex.CompositeTableType<CertificateRow, CertificateInsert, never>;
    certificate_counter: Knex.CompositeTableType<
      CertificateCounterRow,
      CertificateCounterInsert,
      Partial<CertificateCounterInsert>
    >;
    certificate_issue_failure: Knex.CompositeTableType<
      CertificateIssueFailureRow,
      CertificateIssueFailureInsert,
      never
    >;
    certificate_number: Knex.CompositeTableType<CertificateNumberRow, CertificateNumberInsert, never>;
    check_impact_assessment: Knex.CompositeTableType<
      CheckImpactAssessmentRow,
      CheckImpactAssessmentInsert,
      Partial<CheckImpactAssessmentInsert>
    >;
    check_impact_measurement: Knex.CompositeTableType<CheckImpactMeasurementRow, CheckImpactMeasurementInsert, never>;
    check_impact_notice: Knex.CompositeTableType<CheckImpactNoticeRow, CheckImpactNoticeInsert, never>;
    container: Knex.CompositeTableType<ContainerRow, ContainerInsert, never>;
    container_block: Knex.CompositeTableType<ContainerBlockRow, ContainerBlockInsert, never>;
    container_status: Knex.CompositeTableType<ContainerStatusRow, ContainerStatusInsert, never>;
    e_signature: Knex.CompositeTableType<ESignatureRow, ESignatureInsert, never>;
    folder_acquisition: Knex.CompositeTableType<FolderAcquisitionRow, FolderAcquisitionInsert, never>;
    folder_acquisition_event: Knex.CompositeTableType<FolderAcquisitionEventRow, FolderAcquisitionEventInsert, never>;
    gate_override: Knex.CompositeTableType<GateOverrideRow, GateOverrideInsert, never>;
    gate_override_confirmation: Knex.CompositeTableType<
      GateOverrideConfirmationRow,
      GateOverrideConfirmationInsert,
      never
    >;
    identity_method: Knex.CompositeTableType<IdentityMethodRow, IdentityMethodInsert, Partial<IdentityMethodInsert>>;
    identity_test: Knex.CompositeTableType<IdentityTestRow, IdentityTestInsert, Partial<IdentityTestInsert>>;
    instrument: Knex.CompositeTableType<InstrumentRow, InstrumentInsert, Partial<InstrumentInsert>>;
    instrument_check: Knex.CompositeTableType<
      InstrumentCheckRow,
      InstrumentCheckInsert,
      Partial<InstrumentCheckInsert>
    >;
    instrument_check_spec: Knex.CompositeTableType<
      InstrumentCheckSpecRow,
      InstrumentCheckSpecInsert,
      Partial<InstrumentCheckSpecInsert>
    >;
    instrument_intake_setting: Knex.CompositeTableType<
      InstrumentIntakeSettingRow,
      InstrumentIntakeSettingInsert,
      never
    >;
    instrument_maintenance: Knex.CompositeTableType<InstrumentMaintenanceRow, InstrumentMaintenanceInsert, never>;
    instrument_qualification: Knex.CompositeTableType<InstrumentQualificationRow, InstrumentQualificationInsert, never>;
    instrument_service_event: Knex.CompositeTableType<InstrumentServiceEventRow, InstrumentServiceEventInsert, never>;
    integrity_alert: Knex.CompositeTableType<IntegrityAlertRow, IntegrityAlertInsert, never>;
    integrity_alert_record: Knex.CompositeTableType<IntegrityAlertRecordRow, IntegrityAlertRecordInsert, never>;
    integrity_run: Knex.CompositeTableType<IntegrityRunRow, IntegrityRunInsert, Partial<IntegrityRunInsert>>;
    integrity_signoff: Knex.CompositeTableType<IntegritySignoffRow, IntegritySignoffInsert, never>;
    investigation: Knex.CompositeTableType<InvestigationRow, InvestigationInsert, Partial<InvestigationInsert>>;
    job_lease: Knex.CompositeTableType<JobLeaseRow, JobLeaseInsert, Partial<JobLeaseInsert>>;
    line_clearance: Knex.CompositeTableType<LineClearanceRow, LineClearanceInsert, never>;
    lot: Knex.CompositeTableType<LotRow, LotInsert, Partial<LotInsert>>;
    lot_check: Knex.CompositeTableType<LotCheckRow, LotCheckInsert, never>;
    lot_disposition: Knex.CompositeTableType<LotDispositionRow, LotDispositionInsert, never>;
    lot_retest: Knex.CompositeTableType<LotRetestRow, LotRetestInsert, never>;
    machine_account: Knex.CompositeTableType<MachineAccountRow, MachineAccountInsert, Partial<MachineAccountInsert>>;
    mail_outbox: Knex.CompositeTableType<MailOutboxRow, MailOutboxInsert, Partial<MailOutboxInsert>>;
    material: Knex.CompositeTableType<MaterialRow, MaterialInsert, Partial<MaterialInsert>>;
    material_ir_suitability: Knex.CompositeTableType<MaterialIrSuitabilityRow, MaterialIrSuitabilityInsert, never>;
    material_profile: Knex.CompositeTableType<MaterialProfileRow, MaterialProfileInsert, never>;
    material_source: Knex.CompositeTableType<MaterialSourceRow, MaterialSourceInsert, never>;
    measurement: Knex.CompositeTableType<MeasurementRow, MeasurementInsert, never>;
    measurement_provenance: Knex.CompositeTableType<MeasurementProvenanceRow, MeasurementProvenanceInsert, never>;
    method_approval: Knex.CompositeTableType<MethodApprovalRow, MethodApprovalInsert, never>;
    password_history: Knex.CompositeTableType<PasswordHistoryRow, PasswordHistoryInsert, never>;
    reference_spectrum: Knex.CompositeTableType<
      ReferenceSpectrumRow,
      ReferenceSpectrumInsert,
      Partial<ReferenceSpectrumInsert>
    >;
    role_decision: Knex.CompositeTableType<RoleDecisionRow, RoleDecisionInsert, never>;
    role_grant: Knex.CompositeTableType<RoleGrantRow, RoleGrantInsert, never>;
    role_request: Knex.CompositeTableType<RoleRequestRow, RoleRequestInsert, never>;
    sampled_container: Knex.CompositeTableType<SampledContainerRow, SampledContainerInsert, never>;
    sampling_record: Knex.CompositeTableType<SamplingRecordRow, SamplingRecordInsert, never>;
    sign_in_rate: Knex.CompositeTableType<SignInRateRow, SignInRateInsert, Partial<SignInRateInsert>>;
    source_status: Knex.CompositeTableType<SourceStatusRow, SourceStatusInsert, never>;
    spectrum_fingerprint: Knex.CompositeTableType<SpectrumFingerprintRow, SpectrumFingerprintInsert, never>;
    stored_file: Knex.CompositeTableType<StoredFileRow, StoredFileInsert, never>;
    supplier: Knex.CompositeTableType<SupplierRow, SupplierInsert, never>;
    test_handover: Knex.CompositeTableType<TestHandoverRow, TestHandoverInsert, never>;
    trend_baseline: Knex.CompositeTableType<TrendBaselineRow, TrendBaselineInsert, never>;
    trend_signal: Knex.CompositeTableType<TrendSignalRow, TrendSignalInsert, Partial<TrendSignalInsert>>;
    user_session: Knex.CompositeTableType<UserSessionRow, UserSessionInsert, Partial<UserSessionInsert>>;
    webhook_delivery: Knex.CompositeTableType<
      WebhookDeliveryRow,
      WebhookDeliveryInsert,
      Partial<WebhookDeliveryInsert>
    >;
    webhook_endpoint: Knex.CompositeTableType<
      WebhookEndpointRow,
      WebhookEndpointInsert,
      Partial<WebhookEndpointInsert>
    >;
  }
}
