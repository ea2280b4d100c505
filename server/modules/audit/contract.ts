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
  action: string;
  entityType: string;
  entityId: string | null;
  reason: string | null;
  ip: string | null;
}

export interface FieldChange {
  path: string;
  before: unknown;
  after: unknown;
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
