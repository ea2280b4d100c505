/** Words for record types and values in the audit views. */

const RECORD_TYPES: Record<string, string> = {
  lot: 'Lot',
  container: 'Container',
  measurement: 'Measurement',
  identity_test: 'Identity test',
  reference_spectrum: 'Reference spectrum',
  identity_method: 'Identity method',
  material: 'Material',
  instrument: 'Instrument',
  instrument_check: 'Instrument check',
  instrument_check_spec: 'Instrument check specification',
  investigation: 'Investigation',
  certificate: 'Identity certificate',
  user: 'Account',
  audit_trail: 'Audit trail',
};

export function recordTypeLabel(t: string): string {
  return RECORD_TYPES[t] ?? t;
}

/** A stored value as text: strings as they are, nothing as a dash, the rest as JSON. */
export function valueText(v: unknown): string {
  if (v === null || v === undefined) return '—';
  if (typeof v === 'string') return v === '' ? '(empty)' : v;
  return JSON.stringify(v);
}
