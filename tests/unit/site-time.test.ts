/**
 * The one site-time formatter (server/lib/contract.ts) that the screens (src/lib/format.ts), the
 * audit trail report and the identity certificate share. Offsets: CET = UTC+1, CEST = UTC+2 from
 * 01:00 UTC on the last Sunday of March (Directive 2000/84/EC, Art. 2); New York EST = UTC-5 in
 * winter (15 U.S.C. 260a); India UTC+05:30 all year - all from memory, and checked against the IANA
 * time zone data of Node's ICU, which the formatter uses through Intl.
 */
import { describe, expect, it } from 'vitest';
import { formatSiteDate, formatSiteTime, validTimeZone } from '../../server/lib/contract';
import { formatZoned } from '../../server/modules/certificates/document';
import { formatDateTime, setSiteTimeZone } from '../../src/lib/format';

describe('formatSiteTime', () => {
  it('names the zone by its abbreviation on screens and in the audit report', () => {
    expect(formatSiteTime('2026-03-14T08:42:05Z', 'Europe/Berlin')).toBe('2026-03-14 09:42 CET');
    expect(formatSiteTime('2026-07-01T08:42:05Z', 'Europe/Berlin', { seconds: true })).toBe('2026-07-01 10:42:05 CEST');
    // en-GB knows no abbreviation for New York; the en-US one is used.
    expect(formatSiteTime('2026-01-15T12:00:00Z', 'America/New_York')).toBe('2026-01-15 07:00 EST');
  });

  it('names the zone and its offset on the certificate', () => {
    expect(formatSiteTime('2026-03-04T13:05:09Z', 'Europe/Berlin', { seconds: true, zone: 'name-and-offset' })).toBe(
      '2026-03-04 14:05:09 Europe/Berlin (GMT+1)',
    );
    expect(formatZoned('2026-07-04T13:05:09Z', 'Asia/Kolkata')).toBe('2026-07-04 18:35:09 Asia/Kolkata (GMT+5:30)');
  });

  it('gives the same words on screen as in the server documents', () => {
    setSiteTimeZone('Europe/Berlin');
    const t = '2026-10-25T00:59:30Z';
    expect(formatDateTime(t, { seconds: true })).toBe(formatSiteTime(t, 'Europe/Berlin', { seconds: true }));
    expect(formatDateTime(t, { seconds: true })).toBe('2026-10-25 02:59:30 CEST');
  });

  it('takes the calendar day at the site, a dash for no time, and UTC for an unknown zone', () => {
    expect(formatSiteDate('2026-12-31T23:30:00Z', 'Europe/Berlin')).toBe('2027-01-01');
    expect(formatSiteDate('2026-12-31T23:30:00Z', 'America/New_York')).toBe('2026-12-31');
    expect(formatSiteTime(null, 'UTC')).toBe('—');
    expect(formatSiteTime('not a time', 'UTC')).toBe('—');
    expect(validTimeZone('Mars/Olympus_Mons')).toBe('UTC');
    expect(validTimeZone('Europe/Berlin')).toBe('Europe/Berlin');
  });
});
