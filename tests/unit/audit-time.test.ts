/**
 * Site days to UTC instants for the audit filters (src/features/audit/time.ts).
 * Expected offsets: EU summer time runs from the last Sunday of March 01:00 UTC to the last Sunday
 * of October 01:00 UTC (Directive 2000/84/EC), CET = UTC+1, CEST = UTC+2; New York EST = UTC-5,
 * EDT = UTC-4 from the second Sunday of March (US Energy Policy Act 2005) - checked against the
 * runtime's IANA time zone data, which the functions use through Intl.
 */
import { describe, expect, it } from 'vitest';
import { dayRangeToUtc, nextDay, siteDay, siteMidnightUtc, zoneOffsetMs } from '../../src/features/audit/time';

describe('site days to UTC', () => {
  it('midnight in Berlin is 23:00 UTC the day before in winter and 22:00 UTC in summer', () => {
    expect(siteMidnightUtc('2026-01-15', 'Europe/Berlin')!.toISOString()).toBe('2026-01-14T23:00:00.000Z');
    expect(siteMidnightUtc('2026-07-15', 'Europe/Berlin')!.toISOString()).toBe('2026-07-14T22:00:00.000Z');
  });
  it('the days of the daylight-saving changes (29 March and 25 October 2026) start at the right instant', () => {
    // 29 March 2026: midnight is still CET (the clocks change at 02:00 local)
    expect(siteMidnightUtc('2026-03-29', 'Europe/Berlin')!.toISOString()).toBe('2026-03-28T23:00:00.000Z');
    expect(siteMidnightUtc('2026-03-30', 'Europe/Berlin')!.toISOString()).toBe('2026-03-29T22:00:00.000Z');
    expect(siteMidnightUtc('2026-10-25', 'Europe/Berlin')!.toISOString()).toBe('2026-10-24T22:00:00.000Z');
    expect(siteMidnightUtc('2026-10-26', 'Europe/Berlin')!.toISOString()).toBe('2026-10-25T23:00:00.000Z');
  });
  it('west of Greenwich and at UTC', () => {
    expect(siteMidnightUtc('2026-01-15', 'America/New_York')!.toISOString()).toBe('2026-01-15T05:00:00.000Z');
    expect(siteMidnightUtc('2026-03-09', 'America/New_York')!.toISOString()).toBe('2026-03-09T04:00:00.000Z');
    expect(siteMidnightUtc('2026-01-15', 'UTC')!.toISOString()).toBe('2026-01-15T00:00:00.000Z');
    expect(zoneOffsetMs(Date.UTC(2026, 6, 1), 'Asia/Kolkata')).toBe(5.5 * 3600_000);
  });
  it('a day range includes the whole last day; malformed days are ignored', () => {
    expect(dayRangeToUtc('2026-03-01', '2026-03-31', 'Europe/Berlin')).toEqual({
      from: '2026-02-28T23:00:00.000Z',
      to: '2026-03-31T22:00:00.000Z',
    });
    expect(dayRangeToUtc(undefined, '2026-12-31', 'UTC')).toEqual({ to: '2027-01-01T00:00:00.000Z' });
    expect(dayRangeToUtc('14.03.2026', undefined, 'UTC')).toEqual({});
    expect(nextDay('2028-02-28')).toBe('2028-02-29');
    expect(siteDay('2026-03-28T23:30:00Z', 'Europe/Berlin')).toBe('2026-03-29');
  });
});
