/** Words for record types, event types and values in the audit views (shared with the exports: the audit contract). */
import { actionWords, recordTypeWords } from '../../../../server/modules/audit/contract';

export { actionWords };

export function recordTypeLabel(t: string): string {
  return recordTypeWords(t);
}

/** A record as its business number ("Lot L-2026-00005"); the stored id only where no number exists. */
export function recordText(entityType: string, entityId: string | null, recordNumber: string | null): string {
  const type = recordTypeLabel(entityType);
  if (!entityId) return type;
  return `${type} ${recordNumber ?? entityId}`;
}

/** A stored value as text: strings as they are, nothing as a dash, the rest as JSON. */
export function valueText(v: unknown): string {
  if (v === null || v === undefined) return '—';
  if (typeof v === 'string') return v === '' ? '(empty)' : v;
  return JSON.stringify(v);
}

/** A value that holds a stored id: what it names, the id beside it ("Olga Brandt (olga) · id 1"). */
export function namedValueText(v: unknown, name: string | null | undefined): string {
  return name ? `${name} · id ${valueText(v)}` : valueText(v);
}
