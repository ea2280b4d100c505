import { describe, expect, it } from 'vitest';
import {
  defaultMidIrAtrMethod,
  defaultNirMethod,
  gridLength,
  type IdentityMethod,
  preparationKey,
  toleranceAt,
  validateMethod,
} from '../../server/spectra/method';
import { ENGINE_VERSION } from '../../server/spectra/version';

const clone = (m: IdentityMethod): IdentityMethod => structuredClone(m);

describe('identity method', () => {
  it('default methods are valid', () => {
    expect(validateMethod(defaultMidIrAtrMethod)).toEqual([]);
    expect(validateMethod(defaultNirMethod)).toEqual([]);
  });

  it('the mid-IR default excludes atmospheric CO2 around 2400-2280 cm-1 (common practice)', () => {
    const co2 = defaultMidIrAtrMethod.excludedRegions.find((r) => /CO2/.test(r.label));
    expect(co2).toMatchObject({ from: 2280, to: 2400 });
  });

  it('relative band tolerance follows the Ph. Eur. 2.2.24 0.5 % reading: +-5 at 1000, +-15 at 3000 cm-1 (domain-facts 1.1, computed)', () => {
    expect(toleranceAt({ mode: 'relative', percent: 0.5 }, 1000)).toBeCloseTo(5, 12);
    expect(toleranceAt({ mode: 'relative', percent: 0.5 }, 3000)).toBeCloseTo(15, 12);
    expect(toleranceAt({ mode: 'absolute', cm1: 4 }, 3000)).toBe(4);
  });

  it('grid length counts both ends', () => {
    expect(gridLength(defaultMidIrAtrMethod)).toBe(3101);
    expect(gridLength(defaultNirMethod)).toBe(1201);
  });

  it('lists every problem of a broken method in words', () => {
    const m = clone(defaultMidIrAtrMethod) as unknown as Record<string, unknown>;
    m.technique = 'raman';
    m.range = { from: 3800, to: 700 };
    m.baseline = 'spline';
    m.smoothing = { windowSize: 4, polynomial: 7, derivative: 3 };
    m.thresholds = { minCorrelation: 1.2, minDerivativeCorrelation: 'high', maxMahalanobis: -1 };
    m.bandTolerance = { mode: 'relative', percent: 0 };
    m.peakProminence = 2;
    m.quality = { minMaxAbsorbance: 0.5, maxAbsorbance: 0.1, minSignalToNoise: -3 };
    const problems = validateMethod(m);
    for (const re of [
      /technique/,
      /range/,
      /baseline/,
      /windowSize/,
      /polynomial/,
      /derivative/,
      /minCorrelation/,
      /minDerivativeCorrelation/,
      /maxMahalanobis/,
      /bandTolerance.percent/,
      /peakProminence/,
      /maxAbsorbance must exceed/,
      /minSignalToNoise/,
    ]) {
      expect(
        problems.some((p) => re.test(p)),
        `expected a problem matching ${re}`,
      ).toBe(true);
    }
    expect(validateMethod(null)).toEqual(['The method must be an object.']);
  });

  it('refuses grids that are too small or too large, and exclusions that swallow the range', () => {
    expect(validateMethod({ ...clone(defaultMidIrAtrMethod), gridStep: 100 }).join(' ')).toMatch(
      /at least 50 are needed/,
    );
    expect(validateMethod({ ...clone(defaultMidIrAtrMethod), gridStep: 0.01 }).join(' ')).toMatch(/at most 100000/);
    const m = clone(defaultMidIrAtrMethod);
    m.excludedRegions = [{ from: 600, to: 4000, label: 'all' }];
    expect(validateMethod(m).join(' ')).toMatch(/covers the whole range/);
  });

  it('preparation key is stable and changes with anything that changes a prepared spectrum', () => {
    const k = preparationKey(defaultMidIrAtrMethod);
    expect(preparationKey(clone(defaultMidIrAtrMethod))).toBe(k);
    const m = clone(defaultMidIrAtrMethod);
    m.smoothing.windowSize = 11;
    expect(preparationKey(m)).not.toBe(k);
    const t = clone(defaultMidIrAtrMethod);
    t.thresholds.minCorrelation = 0.99; // a threshold does not change preparation
    expect(preparationKey(t)).toBe(k);
  });

  it('exports an engine version', () => {
    expect(ENGINE_VERSION).toMatch(/^\d+\.\d+\.\d+$/);
  });
});
