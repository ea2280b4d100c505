/**
 * The copy rule of the engine (server/spectra/provenance.ts) on real spectra from
 * ../shared/reference-data (sources in its README): every pair of distinct real acquisitions in a
 * folder, including the repeat scans of one sample (atr-ftir-fibres *_rN, nir-polyolefins *_rN:
 * NIST SRM 1474/1476 and the HPU kit, 7 replicates each, r up to 0.99995), must NOT be called a
 * copy; re-exports of each real file made here (points reversed, other decimals, other header,
 * transmittance instead of absorbance) must be.
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { readSpectrum } from '../../server/spectra/parse';
import { pearson } from '../../server/spectra/correlation';
import {
  COPY_RATIO_LIMIT,
  fingerprintOf,
  lookupWindow,
  roundingStep,
  sameAcquisition,
  alignedRatio,
  statedAcquisition,
} from '../../server/spectra/provenance';
import type { Spectrum } from '../../server/spectra/types';
import { referenceDataDir } from './spectra-analysis-data';

/** Folders of real spectra; ftir-starch states no x units (read as cm-1, its README range). */
const FOLDERS = ['atr-ftir', 'atr-ftir/biodiesel', 'atr-ftir-fibres', 'ftir-oils', 'ftir-starch', 'nir-polyolefins'];

function folder(dir: string): { name: string; s: Spectrum }[] {
  return readdirSync(path.join(referenceDataDir, dir))
    .filter((f) => f.endsWith('.csv'))
    .sort()
    .map((f) => ({
      name: `${dir}/${f}`,
      s: readSpectrum(new Uint8Array(readFileSync(path.join(referenceDataDir, dir, f))), f, { xUnits: 'cm-1' }),
    }));
}

const ALL = FOLDERS.map((d) => ({ dir: d, files: folder(d) }));

function reExportCsv(s: Spectrum, decimals: number): string {
  const lines = ['exported again; other software', 'wavenumber (cm-1);absorbance'];
  for (let i = s.x.length - 1; i >= 0; i--) lines.push(`${s.x[i].toFixed(4)};${s.y[i].toFixed(decimals)}`);
  return lines.join('\r\n');
}

function reExportJcampTransmittance(s: Spectrum): string {
  const lines = [
    '##TITLE=re-export',
    '##JCAMP-DX=4.24',
    '##DATA TYPE=INFRARED SPECTRUM',
    '##XUNITS=1/CM',
    '##YUNITS=TRANSMITTANCE',
    `##NPOINTS=${s.x.length}`,
    '##XYPOINTS=(XY..XY)',
  ];
  for (let i = 0; i < s.x.length; i++) lines.push(`${s.x[i]}, ${(10 ** -s.y[i]).toPrecision(10)}`);
  lines.push('##END=');
  return lines.join('\n');
}

describe('real acquisitions are never a copy of each other', () => {
  for (const { dir, files } of ALL) {
    it(`${dir}: every ordered pair of distinct files (${files.length} files)`, () => {
      let compared = 0;
      let smallest = Infinity;
      for (const a of files)
        for (const b of files) {
          if (a === b) continue;
          const r = sameAcquisition(a.s, b.s);
          if (r.notComparable) continue;
          compared++;
          smallest = Math.min(smallest, r.ratio);
          if (r.copy) expect.fail(`${a.name} and ${b.name} were called a copy (${r.rule}, ratio ${r.ratio})`);
        }
      expect(compared).toBeGreaterThan(0);
      // a margin of at least ten times the limit (docs/provenance.md lists the smallest ratio per folder)
      expect(smallest).toBeGreaterThan(10 * COPY_RATIO_LIMIT);
    });
  }

  it('the closest NIR replicate pair (r = 0.99995) is still two acquisitions', () => {
    const nir = ALL.find((f) => f.dir === 'nir-polyolefins')!.files;
    let best = { r: 0, a: '', b: '' };
    for (const a of nir)
      for (const b of nir) {
        if (a.name >= b.name || a.s.x.length !== b.s.x.length) continue;
        const r = pearson(a.s.y, b.s.y);
        if (r > best.r) best = { r, a: a.name, b: b.name };
      }
    expect(best.r.toFixed(5)).toBe('0.99995'); // the pair the issue names (r = 0.99995 when rounded)
    const a = nir.find((f) => f.name === best.a)!.s;
    const b = nir.find((f) => f.name === best.b)!.s;
    expect(sameAcquisition(a, b).copy).toBe(false);
  });
});

describe('re-exports of one acquisition are copies', () => {
  for (const { dir, files } of ALL) {
    it(`${dir}: reversed points, other decimals and header, both directions`, () => {
      for (const f of files) {
        const range = fingerprintOf(f.s).yRange;
        for (const decimals of [7, 5, 4, 3]) {
          // an export coarser than 5 % of the spectrum's own y range no longer keeps the spectrum
          if (10 ** -decimals > 0.05 * range) continue;
          const c = readSpectrum(reExportCsv(f.s, decimals), 'again.csv');
          const there = sameAcquisition(f.s, c);
          const back = sameAcquisition(c, f.s);
          if (!there.copy || !back.copy) expect.fail(`${f.name} at ${decimals} decimals was not found a copy`);
        }
      }
    });
  }

  it('a copy moved along x (within two point spacings) or rescaled in y by a script is a copy (rule "moved")', () => {
    for (const { files } of ALL)
      for (const f of files.slice(0, 4)) {
        const n = f.s.x.length;
        const spacing = Math.abs(f.s.x[n - 1] - f.s.x[0]) / (n - 1);
        for (const [dx, scale, offset] of [
          [0.04, 1, 0],
          [0.7 * spacing, 1, 0],
          [0, 1.003, 0],
          [0, 1, 0.001],
          [-0.3 * spacing, 0.998, -0.0005],
        ]) {
          const moved = {
            ...f.s,
            x: Float64Array.from(f.s.x, (x) => x + dx),
            y: Float64Array.from(f.s.y, (y) => y * scale + offset),
          };
          const r = sameAcquisition(f.s, moved);
          if (!r.copy) expect.fail(`${f.name} moved by ${dx}, x${scale} +${offset}: ratio ${r.alignment?.ratio}`);
          expect(r.rule === 'moved' || r.rule === 'noise').toBe(true);
        }
      }
  });

  it('real acquisitions stay apart after the best move and rescaling (aligned ratio at least ten times the limit)', () => {
    for (const { dir, files } of ALL) {
      let smallest = Infinity;
      for (const a of files.slice(0, 12))
        for (const b of files.slice(0, 12)) {
          if (a === b || sameAcquisition(a.s, b.s).notComparable) continue;
          smallest = Math.min(smallest, alignedRatio(a.s, b.s).ratio);
        }
      if (Number.isFinite(smallest)) expect(smallest, dir).toBeGreaterThan(10 * COPY_RATIO_LIMIT);
    }
  });

  it('a JCAMP-DX transmittance re-export of a CSV absorbance file is a copy', () => {
    for (const f of ALL.find((d) => d.dir === 'nir-polyolefins')!.files.slice(0, 4)) {
      const c = readSpectrum(reExportJcampTransmittance(f.s), 'again.jdx');
      expect(sameAcquisition(f.s, c).copy).toBe(true);
    }
  });

  it('the original lies inside the lookup window of its re-export (the window the upload searches)', () => {
    for (const { files } of ALL)
      for (const f of files.slice(0, 8))
        for (const decimals of [6, 4, 3]) {
          if (10 ** -decimals > 0.05 * fingerprintOf(f.s).yRange) continue;
          const c = readSpectrum(reExportCsv(f.s, decimals), 'again.csv');
          const w = lookupWindow(fingerprintOf(c), roundingStep(c.y));
          const fo = fingerprintOf(f.s);
          expect(fo.points).toBeGreaterThanOrEqual(w.points[0]);
          expect(fo.points).toBeLessThanOrEqual(w.points[1]);
          expect(fo.xLow).toBeGreaterThanOrEqual(w.xLow[0]);
          expect(fo.xHigh).toBeLessThanOrEqual(w.xHigh[1]);
          fo.segments.forEach((m, k) => {
            expect(m).toBeGreaterThanOrEqual(w.segments[k][0]);
            expect(m).toBeLessThanOrEqual(w.segments[k][1]);
          });
        }
  });

  it("most real replicate scans of one sample lie outside each other's lookup window", () => {
    const nir = ALL.find((d) => d.dir === 'nir-polyolefins')!.files;
    let inside = 0;
    let pairs = 0;
    for (const a of nir)
      for (const b of nir) {
        if (a === b) continue;
        pairs++;
        const w = lookupWindow(fingerprintOf(a.s), roundingStep(a.s.y));
        const fb = fingerprintOf(b.s);
        if (fb.segments.every((m, k) => m >= w.segments[k][0] && m <= w.segments[k][1])) inside++;
      }
    expect(inside / pairs).toBeLessThan(0.05);
  });
});

describe('rounding step and stated acquisition', () => {
  it('finds the decimal step of rounded values and none for full precision', () => {
    expect(roundingStep([0.123, 0.5, 1.001])).toBeCloseTo(0.001, 12);
    expect(roundingStep([Math.PI, Math.E, Math.SQRT2])).toBe(0);
  });

  it('reads ##LONGDATE with a zone, ##DATE/##TIME, the spectrometer and a serial (JCAMP-DX 5.01 LDRs)', () => {
    // SBO.jdx states ##LONGDATE=2016/11/22 and ##TIME=10:16:17 (reference-data README)
    const sbo = readSpectrum(new Uint8Array(readFileSync(path.join(referenceDataDir, 'jcamp/SBO.jdx'))), 'SBO.jdx');
    expect(sbo.meta.stated?.whenLocal).toBe('2016-11-22T00:00:00');
    expect(sbo.meta.stated?.hasTime).toBe(false);
    const z = statedAcquisition({
      LONGDATE: '2026/03/04 09:15:02.5 +0100',
      SPECTROMETERDATASYSTEM: 'FT-IR bench S/N: AB-1234',
    });
    expect(z).toMatchObject({
      whenLocal: '2026-03-04T09:15:02',
      hasTime: true,
      utcOffsetMinutes: 60,
      serial: 'AB-1234',
    });
    const old = statedAcquisition({ DATE: '98/07/31', TIME: '23:59:00', $SERIALNUMBER: 'XY 99' });
    expect(old).toMatchObject({ whenLocal: '1998-07-31T23:59:00', serial: 'XY 99' });
    expect(statedAcquisition({ SPECTROMETERDATASYSTEM: 'bench in room 2' }).serial).toBeNull();
    expect(statedAcquisition({ LONGDATE: '2026/02/30' }).whenLocal).toBeNull();
    expect(statedAcquisition({}).whenText).toBeNull();
  });
});
