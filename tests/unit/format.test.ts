/**
 * Client display formatting (src/lib/format.ts): times in the site's zone with the zone named,
 * wavenumbers with their unit, scores with 4 decimals.
 * Zone changes: EU summer time starts and ends at 01:00 UTC on the last Sunday of March and of
 * October (Directive 2000/84/EC, Art. 2 and 3); US Eastern time moves at 02:00 local time on the
 * second Sunday of March (Energy Policy Act of 2005, 15 U.S.C. 260a). Both rules cited from memory;
 * the expected values were also checked against the IANA time zone data in Node's ICU.
 */
import { beforeEach, describe, expect, it } from 'vitest';
import {
  formatDate,
  formatDateTime,
  formatScore,
  formatShift,
  formatWavenumber,
  getSiteTimeZone,
  setSiteTimeZone,
} from '../../src/lib/format';

describe('formatDateTime in the site time zone', () => {
  beforeEach(() => setSiteTimeZone('Europe/Berlin'));

  it('shows a UTC instant as site time with the zone named', () => {
    expect(formatDateTime('2026-03-14T08:42:00Z')).toBe('2026-03-14 09:42 CET');
    expect(formatDateTime('2026-07-01T08:42:05.123Z', { seconds: true })).toBe('2026-07-01 10:42:05 CEST');
  });

  it('switches to summer time at 01:00 UTC on the last Sunday of March 2026 (29 March)', () => {
    expect(formatDateTime('2026-03-29T00:59:00Z')).toBe('2026-03-29 01:59 CET');
    expect(formatDateTime('2026-03-29T01:00:00Z')).toBe('2026-03-29 03:00 CEST');
  });

  it('switches back at 01:00 UTC on the last Sunday of October 2026 (25 October)', () => {
    expect(formatDateTime('2026-10-25T00:59:00Z')).toBe('2026-10-25 02:59 CEST');
    expect(formatDateTime('2026-10-25T01:00:00Z')).toBe('2026-10-25 02:00 CET');
  });

  it('uses the calendar day at the site, not in UTC', () => {
    expect(formatDate('2026-12-31T23:30:00Z')).toBe('2027-01-01');
    setSiteTimeZone('America/New_York');
    expect(formatDate('2026-12-31T23:30:00Z')).toBe('2026-12-31');
    expect(formatDateTime('2026-03-08T06:59:00Z')).toBe('2026-03-08 01:59 EST');
    expect(formatDateTime('2026-03-08T07:00:00Z')).toBe('2026-03-08 03:00 EDT');
  });

  it('falls back to UTC for an unknown zone and shows a dash for no time', () => {
    setSiteTimeZone('Mars/Olympus_Mons');
    expect(getSiteTimeZone()).toBe('UTC');
    expect(formatDateTime('2026-03-14T08:42:00Z')).toBe('2026-03-14 08:42 UTC');
    expect(formatDateTime(null)).toBe('—');
    expect(formatDateTime('not a date')).toBe('—');
  });
});

describe('numbers of the trade', () => {
  it('writes wavenumbers with one decimal and the unit cm⁻¹', () => {
    expect(formatWavenumber(1601.24)).toBe('1601.2 cm⁻¹');
    expect(formatWavenumber(3027)).toBe('3027.0 cm⁻¹');
    expect(formatWavenumber(Number.NaN)).toBe('—');
  });
  it('writes band shifts with their sign', () => {
    expect(formatShift(0.44)).toBe('+0.4 cm⁻¹');
    expect(formatShift(-1.25)).toBe('−1.3 cm⁻¹');
    expect(formatShift(0.01)).toBe('±0.0 cm⁻¹');
  });
  it('writes scores with 4 decimals', () => {
    expect(formatScore(0.99874)).toBe('0.9987');
    expect(formatScore(1)).toBe('1.0000');
    expect(formatScore(undefined)).toBe('—');
  });
});

describe('zone names beyond Europe', () => {
  it('names a zone by its offset when no abbreviation is known', () => {
    setSiteTimeZone('Asia/Kolkata');
    // India Standard Time is UTC+05:30 all year (no summer time).
    expect(formatDateTime('2026-03-14T08:42:00Z')).toMatch(/^2026-03-14 14:12 (GMT\+5:30|IST)$/);
  });
});
