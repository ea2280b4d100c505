/**
 * Formatting for display. Times are stored in UTC and shown in the SITE's time zone with the
 * zone named (e.g. "2026-03-14 09:42 CET"), whatever the browser's own zone is: the formatter is
 * the one the server's documents use (server/lib/contract.ts). The app shell calls
 * setSiteTimeZone() once /api/auth/me has answered.
 */
import { formatSiteDate, formatSiteTime, type TimeInput, validTimeZone } from '../../server/lib/contract';

let siteTimeZone = 'UTC';

export function setSiteTimeZone(tz: string): void {
  siteTimeZone = validTimeZone(tz);
}
export function getSiteTimeZone(): string {
  return siteTimeZone;
}

/** "2026-03-14 09:42 CET" (ISO-like order, 24-hour clock, zone named). */
export function formatDateTime(v: TimeInput, opts: { seconds?: boolean; timeZone?: string } = {}): string {
  return formatSiteTime(v, opts.timeZone ?? siteTimeZone, { seconds: !!opts.seconds });
}

/** "2026-03-14" in the site's zone (the calendar day at the site). */
export function formatDate(v: TimeInput, opts: { timeZone?: string } = {}): string {
  return formatSiteDate(v, opts.timeZone ?? siteTimeZone);
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
