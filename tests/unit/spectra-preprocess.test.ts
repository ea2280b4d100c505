import { describe, expect, it } from 'vitest';
import { SpectrumError } from '../../server/spectra/errors';
import {
  defaultMidIrAtrMethod,
  defaultNirMethod,
  type IdentityMethod,
  preparationKey,
} from '../../server/spectra/method';
import { prepare } from '../../server/spectra/preprocess';
import { ESTER_BANDS, syntheticSpectrum } from './spectra-analysis-data';

const M = defaultMidIrAtrMethod;

describe('prepare', () => {
  const s = syntheticSpectrum(ESTER_BANDS, { step: 1.93 });

  it('resamples onto the method grid and leaves out the excluded regions', () => {
    const p = prepare(s, M);
    expect(p.grid.length).toBe(3101);
    const excluded = Array.from(p.grid).filter((v) => M.excludedRegions.some((r) => v >= r.from && v <= r.to)).length;
    expect(p.x.length).toBe(3101 - excluded);
    expect(p.y.length).toBe(p.x.length);
    expect(p.derivative?.length).toBe(p.x.length);
    expect(Array.from(p.x).some((v) => v >= 2280 && v <= 2400)).toBe(false);
    expect(p.key).toBe(preparationKey(M));
  });

  it('SNV: prepared values have mean 0 and standard deviation 1 (smoothing keeps them close)', () => {
    const p = prepare(s, { ...M, smoothing: { windowSize: 5, polynomial: 2, derivative: 0 } });
    const mean = p.y.reduce((a, b) => a + b, 0) / p.y.length;
    const sd = Math.sqrt(p.y.reduce((a, b) => a + (b - mean) ** 2, 0) / (p.y.length - 1));
    expect(Math.abs(mean)).toBeLessThan(0.01);
    expect(Math.abs(sd - 1)).toBeLessThan(0.01);
  });

  it('the trace is scaled 0..1 and its peaks are the synthetic bands', () => {
    const p = prepare(s, M);
    const used = Array.from(p.trace).filter((_, i) => p.mask[i]);
    expect(Math.min(...used)).toBeCloseTo(0, 12);
    expect(Math.max(...used)).toBeCloseTo(1, 12);
    const strong = p.peaks.filter((k) => k.prominence >= 0.1).map((k) => Math.round(k.position));
    for (const b of ESTER_BANDS.filter((b) => b.height >= 0.06 && b.at !== 2955 && b.at !== 2855)) {
      expect(
        strong.some((v) => Math.abs(v - b.at) <= 1),
        `band ${b.at}`,
      ).toBe(true);
    }
  });

  it('derivative methods give a derivative as the prepared values', () => {
    const nir = syntheticSpectrum(
      [
        { at: 5800, height: 0.3, fwhm: 120 },
        { at: 8250, height: 0.1, fwhm: 150 },
      ],
      { from: 4000, to: 10000, step: 2 },
    );
    const p = prepare(nir, defaultNirMethod);
    // First derivative of a band: positive below its centre, negative above.
    const at = (v: number) => p.y[p.x.findIndex((x) => x >= v)];
    expect(at(5740)).toBeGreaterThan(0);
    expect(at(5860)).toBeLessThan(0);
    expect(p.peaks).toEqual([]); // band picking is off in the NIR default
  });

  it('is deterministic', () => {
    expect(prepare(s, M)).toEqual(prepare(s, M));
  });

  it('refuses a spectrum that does not cover the range', () => {
    const short = syntheticSpectrum(ESTER_BANDS, { from: 900 });
    expect(() => prepare(short, M)).toThrow(SpectrumError);
    try {
      prepare(short, M);
    } catch (e) {
      expect((e as SpectrumError).code).toBe('RANGE_NOT_COVERED');
    }
  });

  it('honours every baseline and normalisation option', () => {
    for (const baseline of ['none', 'offset', 'linear', 'iterative'] as const) {
      for (const normalisation of ['none', 'snv', 'vector'] as const) {
        const m: IdentityMethod = { ...M, baseline, normalisation };
        const p = prepare(s, m);
        expect(p.y.every(Number.isFinite)).toBe(true);
      }
    }
  });
});
