/**
 * Input schemas and response shapes of the audit trail browser, record history and export.
 * Pure data and zod only: the client imports this file too.
 */
import { z } from 'zod';
import { instantInRange, singleLineText } from '../../lib/contract';
import type { SignatureRecord } from '../../lib/contract';

/** An instant as ISO 8601 with a zone (the client converts site-local dates to UTC). */
const instant = instantInRange('Give a date and time in ISO 8601 with a zone, e.g. 2026-03-14T00:00:00Z.');

/**
 * Action filter: an exact action name ("lot.registered") or a prefix ending in "*"
 * ("lot.*" = every action whose name starts with "lot.").
 */
export const ACTION_PATTERN = /^[a-z0-9][a-z0-9._-]*\*?$/i;

export const auditFilterSchema = z.object({
  from: instant.optional(),
  to: instant.optional(),
  actorId: z.coerce.number().int().positive().optional(),
  action: z
    .string()
    .trim()
    .max(65)
    .regex(ACTION_PATTERN, 'Give an action name, or its beginning followed by * (e.g. lot.*).')
    .optional(),
  entityType: z
    .string()
    .trim()
    .min(1)
    .max(40)
    .regex(/^[a-z0-9_.-]+$/i, 'Unknown record type.')
    .optional(),
  entityId: singleLineText().min(1).max(64).optional(),
  q: singleLineText().max(200).optional(),
  sort: z.enum(['asc', 'desc']).default('desc'),
});
export type AuditFilter = z.infer<typeof auditFilterSchema>;

export const auditListQuerySchema = auditFilterSchema.extend({
  cursor: singleLineText().max(200).optional(),
  limit: z.coerce.number().int().min(1).max(200).default(50),
});
export type AuditListQuery = z.infer<typeof auditListQuerySchema>;

export const historyParamsSchema = z.object({
  entityType: z
    .string()
    .trim()
    .min(1)
    .max(40)
    .regex(/^[a-z0-9_.-]+$/i, 'Unknown record type.'),
  entityId: singleLineText().min(1).max(64),
});

/** Rows a list page shows (no before/after payloads: the detail view loads those). */
export interface AuditEventSummary {
  id: number;
  occurredAt: string; // ISO, UTC
  actorId: number | null;
  actorName: string;
  /** the actor's user name (looked up when read; null for the system) */
  actorUsername: string | null;
  action: string;
  /** the event type in words (ACTION_WORDS); the code stays in `action` */
  actionWords: string;
  entityType: string;
  entityId: string | null;
  /** the record's business number (L-…, INV-…, IC-…, REF-…, the user name), looked up when read */
  recordNumber: string | null;
  reason: string | null;
  ip: string | null;
}

export interface FieldChange {
  path: string;
  /** the field name in words ("performed by") */
  label: string;
  before: unknown;
  after: unknown;
  /** where the field holds a stored id: what it names ("Olga Brandt (olga)", "L-2026-00005") */
  beforeName?: string | null;
  afterName?: string | null;
  kind: 'added' | 'removed' | 'changed' | 'unchanged';
}

export interface AuditEventDetail extends AuditEventSummary {
  before: unknown;
  after: unknown;
  changes: FieldChange[];
  prevHash: string;
  hash: string;
}

export interface AuditPage {
  events: AuditEventSummary[];
  nextCursor: string | null;
  /** Counted only for the first page; capped for speed: exact=false means "more than count". */
  total: { count: number; exact: boolean } | null;
  limit: number;
  /** 'accounts' when the caller only sees account and sign-in events (administrator). */
  scope: 'all' | 'accounts';
  /**
   * Only for a text search (q): each request reads at most a window of events along the time
   * axis. complete=false: older (or newer, when ascending) events remain to be searched; follow
   * nextCursor. searchedTo: the time this request searched up to.
   */
  search?: { complete: boolean; searchedTo: string | null; window: number };
}

export interface RecordHistory {
  entityType: string;
  entityId: string;
  /** the record's business number (L-…, INV-…, IC-…, REF-…, the user name) */
  recordNumber: string | null;
  events: AuditEventDetail[];
  signatures: SignatureRecord[];
  /** true when the record has more events than shown (the oldest are shown; the browser has the rest). */
  truncated: boolean;
}

export interface AuditFacets {
  actions: string[];
  entityTypes: string[];
  actors: { id: number; name: string }[];
}

/** Caps, stated in the UI and in the reports. */
export const COUNT_CAP = 10_000;
export const PDF_ROW_CAP = 2_000;
export const HISTORY_CAP = 1_000;
/** Events one text-search request reads (server/modules/audit/repo.ts). */
export const TEXT_WINDOW = 50_000;

// ---------------------------------------------------------------------------------------------
// Words for the audit views and exports: record types, event types and field names, and the
// business numbers that stand for stored ids (docs/compliance.md, "Audit trail in words").

/** Record types in words. */
export const RECORD_TYPE_WORDS: Record<string, string> = {
  lot: 'Lot',
  container: 'Container',
  measurement: 'Measurement',
  identity_test: 'Identity test',
  reference_spectrum: 'Reference spectrum',
  identity_method: 'Identity method',
  material: 'Material',
  material_source: 'Approved source',
  supplier: 'Supplier',
  instrument: 'Instrument',
  instrument_check: 'Instrument check',
  instrument_check_spec: 'Instrument check specification',
  investigation: 'Investigation',
  certificate: 'Identity certificate',
  user: 'Account',
  audit_trail: 'Audit trail',
  audit_chain: 'Audit chain',
  audit_chain_run: 'Audit chain check',
  audit_checkpoint: 'Audit checkpoint',
  audit_review: 'Audit-trail review',
  integrity_run: 'Integrity sweep',
  integrity_alert: 'Integrity alert',
  trend_signal: 'Trend signal',
  trend_baseline: 'Trend baseline',
  machine_account: 'Machine account',
  webhook_endpoint: 'Webhook endpoint',
  role_request: 'Role change request',
  container_block: 'Container block',
  check_impact_assessment: 'Check impact assessment',
  system: 'System',
};

export function recordTypeWords(t: string): string {
  return RECORD_TYPE_WORDS[t] ?? t.replace(/[_-]+/g, ' ').replace(/^./, (c) => c.toUpperCase());
}

/** Event types in words (the stored code is shown beside them). */
export const ACTION_WORDS: Record<string, string> = {
  'audit.chain-check-requested': 'Audit chain check requested',
  'audit.chain-checked': 'Audit chain checked',
  'audit.chain-keyed': 'Audit chain key set',
  'audit.checkpoint-written': 'Audit checkpoint written',
  'audit.exported': 'Audit trail exported',
  'audit.reviewed': 'Audit trail reviewed',
  'auth.locked': 'Account locked after failed sign-ins',
  'auth.password-changed': 'Password changed',
  'auth.password-expired': 'Password expired',
  'auth.signed-in': 'Signed in',
  'auth.signed-out': 'Signed out',
  'auth.session-expired': 'Signed out after inactivity',
  'certificate.downloaded': 'Certificate downloaded',
  'certificate.issue-failed': 'Certificate could not be issued',
  'certificate.issued': 'Certificate issued',
  'certificate.number-reserved': 'Certificate number reserved',
  'certificate.superseded': 'Certificate superseded',
  'certificate.verified': 'Certificate checked: authentic',
  'certificate.verification-failed': 'Certificate checked: NOT authentic',
  'container.block-released': 'Container block released',
  'container.blocked': 'Container blocked',
  'demo.synthetic-history-written': 'Demo history written',
  'gate-override.confirmed': 'Specificity override confirmed',
  'gate-override.requested': 'Specificity override requested',
  'instrument.back-in-service': 'Instrument back in service',
  'instrument.check-failed': 'Instrument check failed',
  'instrument.check-passed': 'Instrument check passed',
  'instrument.created': 'Instrument added',
  'instrument.lookback-assessed': 'Look-back on a failed check assessed',
  'instrument.lookback-opened': 'Look-back on a failed check opened',
  'instrument.maintenance-recorded': 'Instrument maintenance recorded',
  'instrument.out-of-service': 'Instrument taken out of service',
  'instrument.qualification-recorded': 'Instrument qualification recorded',
  'instrument.spec-adopted': 'Check specification adopted',
  'instrument.spec-approved': 'Check specification approved',
  'instrument.spec-superseded': 'Check specification superseded',
  'instrument.updated': 'Instrument changed',
  'integrity.alert-signed-off': 'Integrity alert signed off',
  'integrity.mismatch-found': 'Integrity mismatch found',
  'integrity.sweep-finished': 'Integrity sweep finished',
  'integrity.sweep-requested': 'Integrity sweep requested',
  'investigation.closed': 'Investigation closed',
  'investigation.failure-confirmed': 'Failure confirmed by QA',
  'investigation.opened': 'Investigation opened',
  'investigation.phase1-recorded': 'Laboratory check (phase I) recorded',
  'investigation.result-invalidated': 'Result invalidated by QA',
  'lot.archive-exported': 'Lot archive exported',
  'lot.certificate-recorded': 'Certificate recorded on the lot',
  'lot.check-recorded': 'Lot check recorded',
  'lot.identity-failed': 'Lot identity failed',
  'lot.identity-passed': 'Lot identity passed',
  'lot.identity-status-changed': 'Lot identity status changed',
  'lot.labels-printed': 'Container labels printed',
  'lot.line-cleared': 'Sampling line cleared',
  'lot.receipt-refused': 'Receipt refused',
  'lot.received': 'Lot received',
  'lot.rejected': 'Lot rejected',
  'lot.released': 'Lot released',
  'lot.retest-authorised': 'Retest authorised',
  'lot.sampled': 'Lot sampled',
  'lot.status-labels-printed': 'Status labels printed',
  'machine.account-created': 'Machine account created',
  'machine.account-revoked': 'Machine account revoked',
  'machine.api-call': 'Machine call',
  'machine.token-refused': 'Machine token refused',
  'material.created': 'Material created',
  'material.ir-not-suitable': 'Material marked not suitable for IR identity',
  'material.profile-approved': 'Material profile approved',
  'material.updated': 'Material changed',
  'measurement.recorded': 'Measurement recorded',
  'method.approval-blocked': 'Method approval refused by the specificity check',
  'method.approved': 'Method approved',
  'method.created': 'Method created',
  'method.superseded': 'Method superseded',
  'method.updated': 'Method changed',
  'reference.approval-blocked': 'Reference approval refused by the specificity check',
  'reference.approved': 'Reference approved',
  'reference.approved-with-justification': 'Reference approved with a justification',
  'reference.bands-edited': 'Reference bands edited',
  'reference.retired': 'Reference retired',
  'reference.uploaded': 'Reference uploaded',
  'signature.refused': 'E-signature refused',
  'signature.signed': 'E-signature given',
  'source.created': 'Approved source created',
  'source.status-changed': 'Source status changed',
  'supplier.created': 'Supplier created',
  'system.restored': 'Database restored from a backup',
  'test.handed-over': 'Test handed over',
  'test.instrument-changed': 'Test instrument changed',
  'test.method-version-changed': 'Test method version changed',
  'test.performed': 'Test signed as performed',
  'test.returned': 'Test returned to the operator',
  'test.started': 'Test started',
  'test.verified': 'Test verified',
  'trend.baseline-fixed': 'Trend baseline fixed',
  'trend.signal-acknowledged': 'Trend signal acknowledged',
  'trend.signal-raised': 'Trend signal raised',
  'user.created': 'Account created',
  'user.created-at-site-setup': 'Account created at site setup',
  'user.password-reset': 'Password reset by an administrator',
  'user.role-change-requested': 'Role change requested',
  'user.roles-changed': 'Roles changed',
  'user.unlocked': 'Account unlocked',
  'webhook.endpoint-created': 'Webhook endpoint created',
  'webhook.endpoint-deactivated': 'Webhook endpoint deactivated',
};

/** An event type in words: the known sentence, or the code's parts as words ("lot.sampled" -> "Lot: sampled"). */
export function actionWords(action: string): string {
  const known = ACTION_WORDS[action];
  if (known) return known;
  const dot = action.indexOf('.');
  if (dot < 0) return action.replace(/[-_]+/g, ' ');
  const subject = action.slice(0, dot).replace(/[-_]+/g, ' ');
  return `${subject.charAt(0).toUpperCase()}${subject.slice(1)}: ${action.slice(dot + 1).replace(/[-_.]+/g, ' ')}`;
}

/** Words the field names use that read better written out. */
const FIELD_WORD: Record<string, string> = {
  id: 'id',
  ids: 'ids',
  sha256: 'SHA-256',
  ip: 'address',
  phase1: 'phase I',
  ir: 'IR',
  url: 'URL',
  pdf: 'PDF',
};

/**
 * A stored field path in words: "performedBy" -> "performed by", "bands[2].position" ->
 * "bands 3, position", "approved_signature_id" -> "approved signature id".
 */
export function fieldWords(path: string): string {
  return path
    .split('.')
    .map((part) =>
      part
        .replace(/\[(\d+)\]/g, (_m, i: string) => ` ${Number(i) + 1}`)
        .replace(/([a-z0-9])([A-Z])/g, '$1 $2')
        .replace(/_/g, ' ')
        .toLowerCase()
        .split(' ')
        .map((w) => FIELD_WORD[w] ?? w)
        .join(' ')
        .trim(),
    )
    .join(', ');
}

/**
 * The record type a stored id field points at, from its name ("performedBy" -> user,
 * "lotId" -> lot, "firstReferenceIds" -> reference_spectrum), or null when it is no reference.
 */
export function referenceKind(path: string): string | null {
  const last = (path.split('.').pop() ?? '').replace(/\[\d+\]$/, '');
  if (/^(superseded|replaced)By$/.test(last)) return null;
  if (/[a-z]By$|_by$/.test(last)) return 'user';
  const stem = /^(.*?)(Ids?|_ids?)$/.exec(last)?.[1];
  if (!stem) return null;
  // the last word of the stem: "retestOfInvestigation" -> "investigation", "lot" -> "lot"
  const word = (/([A-Z][a-z]*|_[a-z]+)$/.exec(stem)?.[1] ?? stem).replace(/^_/, '').toLowerCase();
  return REFERENCE_KINDS[word] ?? null;
}

const REFERENCE_KINDS: Record<string, string> = {
  lot: 'lot',
  investigation: 'investigation',
  certificate: 'certificate',
  reference: 'reference_spectrum',
  test: 'identity_test',
  method: 'identity_method',
  material: 'material',
  instrument: 'instrument',
  measurement: 'measurement',
  container: 'container',
  user: 'user',
  actor: 'user',
  account: 'user',
};

/** How a stored id is named: "lot:5" -> "L-2026-00005"; user ids name the person ("Olga Brandt (olga)"). */
export type RecordNames = Record<string, string>;

export function refKey(kind: string, id: string | number): string {
  return `${kind}:${id}`;
}
