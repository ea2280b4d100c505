/**
 * CSV of audit events (RFC 4180: comma separator, CRLF line ends, a field is quoted when it holds
 * a comma, a quote, a line break or leading/trailing blanks, and quotes inside are doubled).
 * Values are written as stored - an export is a true copy of the record (21 CFR 11.10(b)) - with
 * one exception: a text cell that starts with = + - @, a tab or a carriage return gets a leading
 * apostrophe, so that a spreadsheet shows it as text instead of running it as a formula (CSV
 * injection; the usual neutralisation, e.g. OWASP "CSV Injection"). The stored value is the cell
 * without that first apostrophe (docs/compliance.md, "Hardened inputs").
 */
import type { AuditRow } from '../../lib/audit';
import { actionWords, refKey, type RecordNames } from './contract';
import { referencesOf } from './names';

export const CSV_COLUMNS = [
  'event_id',
  'occurred_at_utc',
  'actor_id',
  'actor_username',
  'actor_name',
  'action',
  'action_words',
  'entity_type',
  'entity_id',
  'record_number',
  'reason',
  'before',
  'after',
  'named_ids',
  'ip',
  'prev_hash',
  'hash',
] as const;

/** Characters that make a spreadsheet read a cell as a formula (or shift it) when they come first. */
const FORMULA_START = /^[=+\-@\t\r]/;

/** A text value made safe to open in a spreadsheet: a leading apostrophe before a formula-leading character. */
export function neutraliseFormula(s: string): string {
  return FORMULA_START.test(s) ? `'${s}` : s;
}

export function csvField(v: unknown): string {
  if (v === null || v === undefined) return '';
  // Numbers stay numbers (a negative number is data, not a formula); every text value is neutralised.
  const s = typeof v === 'string' ? neutraliseFormula(v) : String(v);
  return /[",\r\n]|^\s|\s$/.test(s) ? `"${s.replace(/"/g, '""')}"` : s;
}

export function csvLine(values: unknown[]): string {
  return values.map(csvField).join(',') + '\r\n';
}

/**
 * The ids inside before/after that name other records, with their business numbers beside them
 * ("lot 5 = L-2026-00005; user 1 = olga"); the JSON columns stay as stored.
 */
export function namedIds(r: AuditRow, names: RecordNames): string {
  const parts: string[] = [];
  const refs = referencesOf([{ ...r, entity_id: null, actor_id: null }]);
  for (const [kind, ids] of refs)
    for (const id of [...ids].sort((a, b) => a - b)) {
      const name = names[refKey(kind, id)];
      if (name) parts.push(`${kind} ${id} = ${name}`);
    }
  return parts.join('; ');
}

export function eventCsvLine(r: AuditRow, names: RecordNames = {}): string {
  return csvLine([
    Number(r.id),
    new Date(r.occurred_at).toISOString(),
    r.actor_id,
    r.actor_id === null ? null : (names[refKey('user', Number(r.actor_id))] ?? null),
    r.actor_name,
    r.action,
    actionWords(r.action),
    r.entity_type,
    r.entity_id,
    r.entity_id === null ? null : (names[refKey(r.entity_type, r.entity_id)] ?? null),
    r.reason,
    r.before_json,
    r.after_json,
    namedIds(r, names),
    r.ip,
    r.prev_hash,
    r.hash,
  ]);
}
