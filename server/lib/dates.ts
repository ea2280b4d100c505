/** A DATETIME read from the database (or an ISO text) as an ISO 8601 UTC text; null stays null. */
export function iso(d: Date | string | null | undefined): string | null {
  return d === null || d === undefined ? null : new Date(d).toISOString();
}

/** DATE columns come back as a Date at UTC midnight (connection time zone Z). */
export function dateOnly(v: Date | string): string {
  if (typeof v === 'string') return v.slice(0, 10);
  return v.toISOString().slice(0, 10);
}
