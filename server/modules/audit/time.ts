/** Site-time formatting for the reports (events are stored in UTC; reports name the zone). */

const cache = new Map<string, Intl.DateTimeFormat>();

function formatter(tz: string): Intl.DateTimeFormat {
  let f = cache.get(tz);
  if (!f) {
    f = new Intl.DateTimeFormat('en-GB', {
      timeZone: tz,
      year: 'numeric',
      month: '2-digit',
      day: '2-digit',
      hour: '2-digit',
      minute: '2-digit',
      second: '2-digit',
      hourCycle: 'h23',
      timeZoneName: 'short',
    });
    cache.set(tz, f);
  }
  return f;
}

/** "2026-03-14 09:42:05 CET" in the given IANA zone. */
export function formatInZone(d: Date | string, tz: string): string {
  const date = d instanceof Date ? d : new Date(d);
  const p: Record<string, string> = {};
  for (const x of formatter(tz).formatToParts(date)) p[x.type] = x.value;
  return `${p.year}-${p.month}-${p.day} ${p.hour}:${p.minute}:${p.second} ${p.timeZoneName}`;
}

/** A valid IANA zone, or UTC. */
export function safeZone(tz: string | undefined): string {
  if (!tz) return 'UTC';
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: tz });
    return tz;
  } catch {
    return 'UTC';
  }
}
