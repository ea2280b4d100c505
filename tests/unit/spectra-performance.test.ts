import { describe, expect, it } from 'vitest';
import {
  checkBlank,
  checkWavelengthAccuracy,
  measureNoise,
  measurePhotometricNoise,
} from '../../server/spectra/performance';
import type { Spectrum } from '../../server/spectra/types';
import { gaussian, loadReference, seededRandom } from './spectra-analysis-data';

/** A flat spectrum on the real ATR grid (650-4000 cm-1, 1.86 cm-1) with seeded Gaussian noise of sd sigma. */
function flat(sigma: number, seed: number, offset = 0, grid = loadReference('atr-ftir/toluene.csv').x): Spectrum {
  const g = gaussian(seededRandom(seed));
  const y = new Float64Array(grid.length);
  for (let i = 0; i < grid.length; i++) y[i] = offset + sigma * g();
  return {
    x: grid,
    y,
    meta: {
      title: 'blank',
      fileName: 'blank.csv',
      format: 'delimited',
      originalXUnits: 'cm-1',
      originalYUnits: 'absorbance',
      yKind: 'absorbance',
      points: grid.length,
      warnings: [],
    },
  };
}

const BLANK = { maxAbsorbance: 0.005, range: { from: 650, to: 4000 }, excluded: [{ from: 2280, to: 2400 }] };

describe('ATR blank of the clean crystal', () => {
  it('passes a flat blank with instrument-like noise and a constant offset (the baseline is the median)', () => {
    const r = checkBlank(flat(0.0005, 1, 0.02), BLANK);
    expect(r.verdict).toBe('pass');
    expect(r.baseline).toBeCloseTo(0.02, 3);
    expect(r.bandsAboveLimit).toHaveLength(0);
    expect(Math.abs(r.largest!.height)).toBeLessThan(0.005);
  });

  it('FAILS a blank carrying 1 % of a real toluene spectrum: the carry-over band is found where toluene absorbs most', () => {
    // Carry-over: ../shared/reference-data/atr-ftir/toluene.csv (NRCan PlotFTIR, 5-bounce ZnSe ATR), scaled to 1 %.
    // Its strongest band lies at 693 cm-1 (aromatic C-H out-of-plane bending near 694 cm-1; from memory).
    const toluene = loadReference('atr-ftir/toluene.csv');
    const blank = flat(0.0005, 2);
    const y = blank.y.map((v, i) => v + 0.01 * toluene.y[i]);
    const r = checkBlank({ ...blank, y }, BLANK);
    expect(r.verdict).toBe('fail');
    expect(r.bandsAboveLimit.length).toBeGreaterThan(1);
    expect(Math.abs(r.bandsAboveLimit[0].position - 693.3)).toBeLessThan(2);
    expect(r.bandsAboveLimit[0].height).toBeGreaterThan(0.04);
  });

  it('catches a negative band (a contaminated background) and ignores one inside an excluded region', () => {
    const blank = flat(0.0003, 3);
    const y = Float64Array.from(blank.y);
    const iNeg = blank.x.findIndex((v) => v > 1740);
    y[iNeg] -= 0.02;
    const neg = checkBlank({ ...blank, y }, BLANK);
    expect(neg.verdict).toBe('fail');
    expect(neg.bandsAboveLimit[0].height).toBeLessThan(-0.015);

    const y2 = Float64Array.from(blank.y);
    y2[blank.x.findIndex((v) => v > 2350)] += 0.05; // atmospheric CO2, excluded by the site
    expect(checkBlank({ ...blank, y: y2 }, BLANK).verdict).toBe('pass');
  });

  it('fails when nothing of the range was measured (no blank at all is not a clean blank)', () => {
    const r = checkBlank(flat(0.0001, 4), { ...BLANK, range: { from: 5000, to: 6000 } });
    expect(r.pointsChecked).toBe(0);
    expect(r.verdict).toBe('fail');
  });
});

describe('noise figure', () => {
  // Statistics: the RMS of n Gaussian draws estimates their standard deviation (relative standard
  // error about 1/sqrt(2n); n = 108 here gives about 7 %).
  const REGION = { from: 2000, to: 2200 };
  it('the RMS about the fitted line recovers the Gaussian sigma, also on a sloping baseline', () => {
    const s = flat(0.001, 5);
    const slope = Float64Array.from(s.y, (v, i) => v + 0.0004 * (s.x[i] - 2000));
    for (const y of [s.y, slope]) {
      const r = measureNoise({ ...s, y }, { region: REGION, maxRms: 0.002 });
      expect(r.pointsChecked).toBeGreaterThan(100);
      expect(r.rms).toBeGreaterThan(0.00085);
      expect(r.rms).toBeLessThan(0.00115);
      // Peak-to-peak of ~108 Gaussian draws: roughly 4.5 to 6.5 sigma (common practice: about 5 sigma).
      expect(r.peakToPeak / r.rms).toBeGreaterThan(3.5);
      expect(r.peakToPeak / r.rms).toBeLessThan(7.5);
      expect(r.verdict).toBe('pass');
    }
  });

  it('FAILS a noisy spectrum against the limit, and a peak-to-peak limit on its own', () => {
    expect(measureNoise(flat(0.003, 6), { region: REGION, maxRms: 0.002 }).verdict).toBe('fail');
    const pp = measureNoise(flat(0.001, 7), { region: REGION, maxRms: 0.002, maxPeakToPeak: 0.002 });
    expect(pp.rms).toBeLessThan(0.002);
    expect(pp.verdict).toBe('fail');
  });

  it('fails a region outside the spectrum', () => {
    expect(measureNoise(flat(0.0001, 8), { region: { from: 9000, to: 9100 }, maxRms: 1 }).verdict).toBe('fail');
  });
});

describe('NIR wavelength accuracy', () => {
  // Real NIR diffuse reflectance: ../shared/reference-data/nir-polyolefins/HDPE_NIST-SRM1474_N1474PE_r1.csv
  // (NIST ECAPS). Polyethylene CH2 bands: first overtone near 1728 and 1765 nm, combination bands near
  // 2310 and 2350 nm (from memory: interpretive NIR tables).
  const hdpe = () => loadReference('nir-polyolefins/HDPE_NIST-SRM1474_N1474PE_r1.csv');
  const PE = [1728, 1765, 2310, 2350];

  it('locates the polyethylene bands of the real spectrum within 5 nm of the tabulated positions', () => {
    const r = checkWavelengthAccuracy(hdpe(), {
      standard: 'test',
      searchWindow: 8,
      bands: PE.map((nominal) => ({ nominal, tolerance: 5 })),
    });
    expect(r.verdict).toBe('pass');
    for (const b of r.bands) expect(Math.abs(b.deviation!)).toBeLessThan(5);
  });

  it('a copy shifted by 2 nm moves every deviation by 2 nm and FAILS positions certified from the unshifted one', () => {
    const s = hdpe();
    const base = checkWavelengthAccuracy(s, { standard: 'c', bands: PE.map((n) => ({ nominal: n, tolerance: 1 })) });
    const certified = base.bands.map((b) => ({ nominal: b.found!, tolerance: 1 }));
    // The unshifted spectrum against its own positions: deviation 0.
    const same = checkWavelengthAccuracy(s, { standard: 'c', bands: certified });
    expect(same.verdict).toBe('pass');
    same.bands.forEach((b) => expect(Math.abs(b.deviation!)).toBeLessThan(1e-6));
    // Shift by +2 nm: x(cm-1) = 1e7 / (1e7 / x + 2).
    const shifted: Spectrum = { ...s, x: s.x.map((v) => 1e7 / (1e7 / v + 2)) };
    const r = checkWavelengthAccuracy(shifted, { standard: 'c', bands: certified });
    expect(r.verdict).toBe('fail');
    r.bands.forEach((b) => expect(b.deviation!).toBeCloseTo(2, 1));
  });

  it('a band missing from the window fails with found = null', () => {
    const r = checkWavelengthAccuracy(hdpe(), { standard: 'c', bands: [{ nominal: 3000, tolerance: 1 }] });
    expect(r.bands[0].found).toBeNull();
    expect(r.verdict).toBe('fail');
  });
});

describe('NIR photometric noise', () => {
  // The reference measured against itself: zero absorbance plus noise. Grid: the real NIR grid
  // (../shared/reference-data/nir-polyolefins, ~1.93 cm-1).
  const grid = loadReference('nir-polyolefins/HDPE_NIST-SRM1474_N1474PE_r1.csv').x;
  const LIMITS = { fromNm: 1200, toNm: 2200, segmentNm: 100, maxMeanRms: 0.0003 };

  it('the mean segment RMS recovers the Gaussian sigma over ten 100 nm segments', () => {
    const r = measurePhotometricNoise(flat(0.0001, 9, 0, grid), LIMITS);
    expect(r.segments).toHaveLength(10);
    expect(r.meanRms).toBeGreaterThan(0.00009);
    expect(r.meanRms).toBeLessThan(0.00011);
    expect(r.verdict).toBe('pass');
  });

  it('FAILS noise above the limit, and a range the spectrum does not cover', () => {
    expect(measurePhotometricNoise(flat(0.0005, 10, 0, grid), LIMITS).verdict).toBe('fail');
    expect(measurePhotometricNoise(flat(0.00001, 11, 0, grid), { ...LIMITS, fromNm: 2400, toNm: 2600 }).verdict).toBe(
      'fail',
    );
  });
});
