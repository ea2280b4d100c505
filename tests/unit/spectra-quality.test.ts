import { describe, expect, it } from 'vitest';
import { defaultMidIrAtrMethod, type IdentityMethod } from '../../server/spectra/method';
import { checkQuality, estimateNoise } from '../../server/spectra/quality';
import {
  ESTER_BANDS,
  gaussian,
  listSet,
  loadReference,
  seededRandom,
  syntheticSpectrum,
} from './spectra-analysis-data';

const M = defaultMidIrAtrMethod;

describe('measurement quality gate', () => {
  it('refuses the real acrylic scan whose strongest band is 0.007 absorbance as too weak (reference-data README: weak acrylic spectra)', () => {
    const r = checkQuality(loadReference('atr-ftir-fibres/acrylic_PAN-MMA-MA_s017_r1.csv'), M);
    expect(r.ok).toBe(false);
    expect(r.metrics.bandHeight).toBeGreaterThan(0.006);
    expect(r.metrics.bandHeight).toBeLessThan(0.008);
    expect(r.problems.map((p) => p.code)).toEqual(['TOO_WEAK']);
    expect(r.problems[0].advice).toMatch(/pressure/);
  });

  it('refuses the real toluene spectrum, clipped at 5.000 absorbance (reference-data README), as saturated', () => {
    const r = checkQuality(loadReference('atr-ftir/toluene.csv'), M);
    expect(r.ok).toBe(false);
    expect(r.problems.map((p) => p.code)).toContain('SATURATED');
    expect(r.metrics.maxAbsorbance).toBeCloseTo(5, 3);
  });

  it('detects a flat top below the absorbance limit (clipped by the detector or the export)', () => {
    const s = syntheticSpectrum(ESTER_BANDS);
    const clip = 0.3;
    const y = s.y.map((v) => Math.min(v, clip));
    const r = checkQuality({ ...s, y }, M);
    expect(r.metrics.flatTopPoints).toBeGreaterThanOrEqual(3);
    expect(r.problems.map((p) => p.code)).toEqual(['SATURATED']);
    expect(r.problems[0].message).toMatch(/flat top/);
  });

  it('refuses a noisy spectrum and estimates white noise correctly', () => {
    const s = syntheticSpectrum(ESTER_BANDS);
    const g = gaussian(seededRandom(5));
    const sigma = 0.004; // band height 0.45: signal-to-noise about 110, below the limit of 150
    const y = s.y.map((v) => v + sigma * g());
    expect(estimateNoise(y) / sigma).toBeGreaterThan(0.85);
    expect(estimateNoise(y) / sigma).toBeLessThan(1.15);
    const r = checkQuality({ ...s, y }, M);
    expect(r.problems.map((p) => p.code)).toEqual(['TOO_NOISY']);
    const quiet = s.y.map((v) => v + 0.0005 * g());
    expect(checkQuality({ ...s, y: quiet }, M).ok).toBe(true);
  });

  it('refuses a spectrum that does not cover the method range', () => {
    const s = syntheticSpectrum(ESTER_BANDS, { from: 1000, to: 4000 });
    const r = checkQuality(s, M);
    expect(r.problems.map((p) => p.code)).toContain('RANGE_NOT_COVERED');
  });

  it('passes every other real ATR spectrum of the fibre and solvent sets', () => {
    const files = [...listSet('atr-ftir'), ...listSet('atr-ftir-fibres')].filter((f) => !/toluene|s017_r1/.test(f));
    for (const f of files) expect(checkQuality(loadReference(f), M).ok, f).toBe(true);
  });

  it('limits come from the method', () => {
    const strict: IdentityMethod = { ...M, quality: { ...M.quality, minMaxAbsorbance: 0.5 } };
    expect(checkQuality(loadReference('atr-ftir-fibres/nylon6_s074.csv'), strict).problems.map((p) => p.code)).toEqual([
      'TOO_WEAK',
    ]);
  });
});
