/**
 * Calendar days at the site turned into UTC instants for the audit filters. The trail stores UTC;
 * a "from 2026-03-14" typed by an auditor means midnight of that day in the SITE's time zone
 * (whatever the browser's zone is), and "to 2026-03-20" includes that whole day.
 */
import { formatSiteDate } from '../../../server/lib/contract';

/** Offset of `tz` from UTC at the instant `ms`, in ms (positive east of Greenwich). */
export function zoneOffsetMs(ms: number, tz: string): number {
  const f = new Intl.DateTimeFormat('en-US', {
    timeZone: tz,
    hourCycle: 'h23',
    year: 'numeric',
    month: '2-digit',
    day: '2-digit',
    hour: '2-digit',
    minute: '2-digit',
    second: '2-digit',
  });
  const p: Record<string, number> = {};
  for (const x of f.formatToParts(new Date(ms))) if (x.type !== 'literal') p[x.type] = Number(x.value);
  const asUtc = Date.UTC(p.year, p.month - 1, p.day, p.hour, p.minute, p.second);
  return asUtc - Math.floor(ms / 1000) * 1000;
}

/** The UTC instant of 00:00 on `day` (YYYY-MM-DD) in `tz`; null for a malformed day. */
export function siteMidnightUtc(day: string, tz: string): Date | null {
  const m = /^(\d{4})-(\d{2})-(\d{2})$/.exec(day);
  if (!m) return null;
  const wall = Date.UTC(Number(m[1]), Number(m[2]) - 1, Number(m[3]));
  if (Number.isNaN(wall)) return null;
  // Two passes settle the offset across a daylight-saving change.
  let t = wall - zoneOffsetMs(wall, tz);
  t = wall - zoneOffsetMs(t, tz);
  return new Date(t);
}

/** The day after `day` (YYYY-MM-DD). */
export function nextDay(day: string): string {
  const [y, mo, d] = day.split('-').map(Number);
  return new Date(Date.UTC(y, mo - 1, d + 1)).toISOString().slice(0, 10);
}

/** The calendar day at the site of a UTC instant (YYYY-MM-DD). */
export function siteDay(iso: string, tz: string): string {
  return formatSiteDate(iso, tz);
}

/** Site days (inclusive range) to the API's from (inclusive) / to (exclusive) instants. */
export function dayRangeToUtc(
  fromDay: string | undefined,
  toDay: string | undefined,
  tz: string,
): { from?: string; to?: string } {
  const from = fromDay ? siteMidnightUtc(fromDay, tz) : null;
  const to = toDay ? siteMidnightUtc(nextDay(toDay), tz) : null;
  return { ...(from ? { from: from.toISOString() } : {}), ...(to ? { to: to.toISOString() } : {}) };
}
