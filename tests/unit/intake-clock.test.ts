/**
 * Clocks and labels of the export-folder intake (issue 15 item 6; docs/instrument-intake.md).
 * A JCAMP-DX time carries no zone (JCAMP-DX 5.01 ##LONGDATE= allows one, instruments mostly omit
 * it): it is read in the instrument clock's zone. The zone rules checked here are those of the
 * IANA time zone database: Europe/Berlin is UTC+1 in winter and UTC+2 from the last Sunday of March,
 * 01:00 UTC (EU Directive 2000/84/EC); America/New_York is UTC-5 in winter.
 */
import { describe, expect, it } from 'vitest';
import { newAcquisition, wallTime } from '../../fixtures/instrument-simulator';
import { clockOffsetSeconds, clockWarning } from '../../server/lib/clock-offset';
import { labelsOfFile } from '../../server/modules/intake/labels';
import { zonedToUtc } from '../../server/modules/provenance/rules';
import { readSpectrum } from '../../server/spectra';

/** An invented two-band absorbance spectrum, 4000-650 cm-1 in 2 cm-1 steps (demo data). */
function csv(): Uint8Array {
  const lines = ['wavenumber_cm-1,absorbance'];
  for (let x = 4000; x >= 650; x -= 2) {
    const y = 0.02 + 0.8 * Math.exp(-(((x - 1650) / 12) ** 2)) + 0.5 * Math.exp(-(((x - 2920) / 20) ** 2));
    lines.push(`${x},${y.toFixed(6)}`);
  }
  return new Uint8Array(Buffer.from(lines.join('\n')));
}

function statedInstant(at: Date, fileZone: string, readZone: string): Date {
  const bytes = newAcquisition({
    folder: '/unused',
    label: 'L-2026-00007-003',
    source: { bytes: csv(), name: 'demo.csv' },
    instrument: { name: 'FTIR demo', serialNumber: 'SN-1' },
    timeZone: fileZone,
    clock: at,
  });
  const s = readSpectrum(new Uint8Array(bytes), 'scan.jdx');
  expect(s.meta.stated?.utcOffsetMinutes).toBeNull(); // no zone in the file, as instruments write it
  return zonedToUtc(s.meta.stated!.whenLocal!, readZone);
}

describe('a JCAMP-DX time without a zone, read in the instrument clock zone', () => {
  it('gives back the instant of the scan in winter, in summer and on both sides of the March change (IANA rules)', () => {
    for (const iso of [
      '2026-01-15T09:30:00Z',
      '2026-07-01T12:00:00Z',
      '2026-03-29T00:59:00Z',
      '2026-03-29T01:01:00Z',
    ]) {
      const at = new Date(iso);
      expect(statedInstant(at, 'Europe/Berlin', 'Europe/Berlin').toISOString()).toBe(at.toISOString());
      expect(statedInstant(at, 'America/New_York', 'America/New_York').toISOString()).toBe(at.toISOString());
    }
    expect(wallTime(new Date('2026-01-15T09:30:00Z'), 'Europe/Berlin')).toBe('2026/01/15 10:30:00'); // UTC+1
    expect(wallTime(new Date('2026-07-01T12:00:00Z'), 'Europe/Berlin')).toBe('2026/07/01 14:00:00'); // UTC+2
    expect(wallTime(new Date('2026-01-15T09:30:00Z'), 'America/New_York')).toBe('2026/01/15 04:30:00'); // UTC-5
  });

  it('read in a wrong zone, the time is off by the zones’ difference, and the verifier is warned', () => {
    const at = new Date('2026-07-01T12:00:00Z');
    const wrong = statedInstant(at, 'Europe/Berlin', 'UTC'); // Berlin wall time taken as UTC: 2 h late
    const offset = clockOffsetSeconds(wrong, at);
    expect(offset).toBe(-7200);
    expect(clockWarning(offset, 5)).toMatch(/120 min after it reached the server/);
  });
});

describe('what the simulated instrument states', () => {
  it('its serial whole, even with spaces, and the container label as the sample', () => {
    const bytes = newAcquisition({
      folder: '/unused',
      label: 'L-2026-00007-003',
      source: { bytes: csv(), name: 'demo.csv' },
      instrument: { name: 'ATR bench 2', serialNumber: 'SN-ATR bench 2' },
      timeZone: 'Europe/Berlin',
    });
    const s = readSpectrum(new Uint8Array(bytes), 'scan.jdx');
    expect(s.meta.stated?.serial).toBe('SN-ATR bench 2');
    expect(s.meta.stated?.sampleText).toBe('L-2026-00007-003');
  });
});

describe('clock offset and warning', () => {
  it('warns only beyond the tolerance, in either direction', () => {
    const received = new Date('2026-05-04T10:00:00Z');
    expect(clockOffsetSeconds(null, received)).toBeNull();
    expect(clockWarning(null, 5)).toBeNull();
    expect(clockOffsetSeconds(new Date('2026-05-04T09:55:00Z'), received)).toBe(300);
    expect(clockWarning(300, 5)).toBeNull();
    expect(clockWarning(-300, 5)).toBeNull();
    expect(clockWarning(301, 5)).toMatch(/5 min before it reached the server \(site tolerance 5 min\)/);
    expect(clockWarning(-301, 5)).toMatch(/instrument clock runs ahead/);
    expect(clockWarning(40, 0.25)).toMatch(/site tolerance 0.25 min/);
  });
});

describe('labels a file names', () => {
  it('finds a container label in the file name, the title or the sample identifier, once each', () => {
    expect(labelsOfFile('l-2026-00007-003_scan.jdx', null, null)).toEqual(['L-2026-00007-003']);
    expect(labelsOfFile('scan_0001.jdx', 'identity scan', 'L-2026-00007-003')).toEqual(['L-2026-00007-003']);
    expect(labelsOfFile('L-2026-00007-003.jdx', 'L-2026-00007-003 scan', 'L-2026-00007-003')).toEqual([
      'L-2026-00007-003',
    ]);
    expect(labelsOfFile('L-2026-00007-003.jdx', null, 'L-2026-00007-004')).toEqual([
      'L-2026-00007-003',
      'L-2026-00007-004',
    ]);
    // a lot number alone, or a longer number, is no container label
    expect(labelsOfFile('L-2026-00007.jdx', 'L-2026-00007-0031', null)).toEqual([]);
  });
});
