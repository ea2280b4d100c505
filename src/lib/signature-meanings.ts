/** The meaning of an e-signature in words (21 CFR 11.50), one list for every page that shows signatures. */
const MEANINGS: Record<string, string> = {
  performed: 'Performed',
  verified: 'Verified',
  returned: 'Returned to the operator',
  approved: 'Approved',
  'approved-with-justification': 'Approved with a written justification',
  retired: 'Retired',
  'instrument-check': 'Instrument check performed',
  'phase-1-recorded': 'Phase I laboratory check recorded',
  'result-invalidated': 'Result invalidated, retest authorised',
  'failure-confirmed': 'Failure confirmed, lot rejected',
  issued: 'Issued',
  'role-change-confirmed': 'Role change confirmed by a second administrator',
  'integrity-reviewed': 'Integrity alert reviewed by QA',
};

export function meaningLabel(meaning: string): string {
  return MEANINGS[meaning] ?? meaning;
}
