/**
 * CSV of audit events (RFC 4180: comma separator, CRLF line ends, a field is quoted when it holds
 * a comma, a quote, a line break or leading/trailing blanks, and quotes inside are doubled).
 * Values are written exactly as stored - an export is a true copy of the record (21 CFR 11.10(b)).
 */
import type { AuditRow } from '../../lib/audit';

export const CSV_COLUMNS = [
  'event_id',
  'occurred_at_utc',
  'actor_id',
  'actor_name',
  'action',
  'entity_type',
  'entity_id',
  'reason',
  'before',
  'after',
  'ip',
  'prev_hash',
  'hash',
] as const;

export function csvField(v: unknown): string {
  if (v === null || v === undefined) return '';
  const s = typeof v === 'string' ? v : String(v);
  return /[",\r\n]|^\s|\s$/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function csvLine(values: unknown[]): string {
  return values.map(csvField).join(',') + '\r\n';
}

export function eventCsvLine(r: AuditRow): string {
  return csvLine([
    Number(r.id),
    new Date(r.occurred_at).toISOString(),
    r.actor_id,
    r.actor_name,
    r.action,
    r.entity_type,
    r.entity_id,
    r.reason,
    r.before_json,
    r.after_json,
    r.ip,
    r.prev_hash,
    r.hash,
  ]);
}
