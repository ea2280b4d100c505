/**
 * Formatting for display. Times are stored in UTC and shown in the SITE's time zone with the
 * zone named (e.g. "2026-03-14 09:42 CET"), whatever the browser's own zone is. The app shell
 * calls setSiteTimeZone() once /api/auth/me has answered.
 */

let siteTimeZone = 'UTC';

export function setSiteTimeZone(tz: string): void {
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: tz });
    siteTimeZone = tz;
  } catch {
    siteTimeZone = 'UTC';
  }
}
export function getSiteTimeZone(): string {
  return siteTimeZone;
}

type DateInput = string | number | Date | null | undefined;

function toDate(v: DateInput): Date | null {
  if (v === null || v === undefined || v === '') return null;
  const d = v instanceof Date ? v : new Date(v);
  return Number.isNaN(d.getTime()) ? null : d;
}

const fmtCache = new Map<string, Intl.DateTimeFormat>();
function fmt(key: string, tz: string, o: Intl.DateTimeFormatOptions, locale = 'en-GB'): Intl.DateTimeFormat {
  const k = `${key}|${tz}|${locale}`;
  let f = fmtCache.get(k);
  if (!f) {
    f = new Intl.DateTimeFormat(locale, { ...o, timeZone: tz });
    fmtCache.set(k, f);
  }
  return f;
}

function parts(d: Date, tz: string, withSeconds: boolean): Record<string, string> {
  const f = fmt(withSeconds ? 'dts' : 'dt', tz, {
    year: 'numeric',
    month: '2-digit',
    day: '2-digit',
    hour: '2-digit',
    minute: '2-digit',
    ...(withSeconds ? { second: '2-digit' } : {}),
    hourCycle: 'h23',
    timeZoneName: 'short',
  });
  const out: Record<string, string> = {};
  for (const p of f.formatToParts(d)) out[p.type] = p.value;
  // Each locale knows the abbreviations of its own region (en-GB: CET, CEST, BST; en-US: EST,
  // PDT); where en-GB has only an offset ("GMT-5"), ask en-US, else keep the offset.
  if (/^GMT[+-]/.test(out.timeZoneName ?? '')) {
    const us = fmt('zone-us', tz, { timeZoneName: 'short' }, 'en-US')
      .formatToParts(d)
      .find((p) => p.type === 'timeZoneName')?.value;
    if (us && !/^GMT[+-]/.test(us)) out.timeZoneName = us;
  }
  return out;
}

/** "2026-03-14 09:42 CET" (ISO-like order, 24-hour clock, zone named). */
export function formatDateTime(v: DateInput, opts: { seconds?: boolean; timeZone?: string } = {}): string {
  const d = toDate(v);
  if (!d) return '—';
  const p = parts(d, opts.timeZone ?? siteTimeZone, !!opts.seconds);
  const time = `${p.hour}:${p.minute}${opts.seconds ? `:${p.second}` : ''}`;
  return `${p.year}-${p.month}-${p.day} ${time} ${p.timeZoneName}`;
}

/** "2026-03-14" in the site's zone (the calendar day at the site). */
export function formatDate(v: DateInput, opts: { timeZone?: string } = {}): string {
  const d = toDate(v);
  if (!d) return '—';
  const p = parts(d, opts.timeZone ?? siteTimeZone, false);
  return `${p.year}-${p.month}-${p.day}`;
}

/** Wavenumber with its unit: "1601.2 cm⁻¹". */
export function formatWavenumber(v: number | null | undefined, decimals = 1): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  return `${v.toFixed(decimals)} cm⁻¹`;
}

/** A band shift with its sign: "+1.3 cm⁻¹", "−0.4 cm⁻¹". */
export function formatShift(v: number | null | undefined, decimals = 1): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  const s = Math.abs(v).toFixed(decimals);
  const sign = Number(s) === 0 ? '±' : v > 0 ? '+' : '−';
  return `${sign}${s} cm⁻¹`;
}

/** Match scores and correlation coefficients: 4 decimals ("0.9987"). */
export function formatScore(v: number | null | undefined): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  return v.toFixed(4);
}

/** Plain number with fixed decimals. */
export function formatNumber(v: number | null | undefined, decimals = 0): string {
  if (v === null || v === undefined || !Number.isFinite(v)) return '—';
  return v.toLocaleString('en-GB', { minimumFractionDigits: decimals, maximumFractionDigits: decimals });
}

/** File sizes: "12.4 kB". */
export function formatBytes(n: number): string {
  if (!Number.isFinite(n) || n < 0) return '—';
  if (n < 1024) return `${n} B`;
  if (n < 1024 * 1024) return `${(n / 1024).toFixed(1)} kB`;
  return `${(n / 1024 / 1024).toFixed(1)} MB`;
}
