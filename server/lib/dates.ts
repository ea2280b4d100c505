/** DATE columns come back as a Date at UTC midnight (connection time zone Z). */
export function dateOnly(v: Date | string): string {
  if (typeof v === 'string') return v.slice(0, 10);
  return v.toISOString().slice(0, 10);
}
