import { corr } from 'mathjs';
import { xCorrelation } from 'ml-spectra-processing';
import { describe, expect, it } from 'vitest';
import { centredUnit, dot, pearson } from '../../server/spectra/correlation';
import { gaussian, seededRandom } from './spectra-analysis-data';

// Source: F. J. Anscombe, "Graphs in Statistical Analysis", The American Statistician 27(1):17-21 (1973),
// the four data sets of Table 1 (values from memory; their famous property, r = 0.816 for all four, is the check).
const X123 = [10, 8, 13, 9, 11, 14, 6, 4, 12, 7, 5];
const ANSCOMBE: Array<[number[], number[]]> = [
  [X123, [8.04, 6.95, 7.58, 8.81, 8.33, 9.96, 7.24, 4.26, 10.84, 4.82, 5.68]],
  [X123, [9.14, 8.14, 8.74, 8.77, 9.26, 8.1, 6.13, 3.1, 9.13, 7.26, 4.74]],
  [X123, [7.46, 6.77, 12.74, 7.11, 7.81, 8.84, 6.08, 5.39, 8.15, 6.42, 5.73]],
  [
    [8, 8, 8, 8, 8, 8, 8, 19, 8, 8, 8],
    [6.58, 5.76, 7.71, 8.84, 8.47, 7.04, 5.25, 12.5, 5.56, 7.91, 6.89],
  ],
];

describe('Pearson correlation', () => {
  it("gives r = 0.816 for each of Anscombe's four data sets (Anscombe 1973)", () => {
    // Published to three decimals; the four exact values lie between 0.8162 and 0.8166.
    for (const [x, y] of ANSCOMBE) expect(Math.abs(pearson(x, y) - 0.816)).toBeLessThan(0.001);
    const r = ANSCOMBE.map(([x, y]) => pearson(x, y));
    expect(Math.max(...r) - Math.min(...r)).toBeLessThan(0.0005);
  });

  it("stays exact far from zero, where ml-spectra-processing's one-pass xCorrelation cancels (why the engine keeps its own)", () => {
    // Anscombe's first set shifted by 1e7: r is unchanged by a shift (Pearson is location-invariant).
    const [x, y] = ANSCOMBE[0];
    const shift = (v: number[]) => v.map((a) => a + 1e7);
    expect(pearson(shift(x), shift(y))).toBeCloseTo(pearson(x, y), 9);
    expect(xCorrelation(x, y)).toBeCloseTo(pearson(x, y), 12);
    const far = xCorrelation(shift(x), shift(y));
    expect(Number.isNaN(far) || Math.abs(far - pearson(x, y)) > 1e-3).toBe(true);
  });

  it('agrees with mathjs corr to 1e-12 on random vectors (independent implementation)', () => {
    const g = gaussian(seededRandom(42));
    for (let t = 0; t < 20; t++) {
      const n = 10 + t * 97;
      const a = Array.from({ length: n }, () => g());
      const b = a.map((v) => 0.3 * v + g() * (t / 10 + 0.1) + 5);
      expect(Math.abs(pearson(a, b) - (corr(a, b) as number))).toBeLessThan(1e-12);
    }
  });

  it('is +1 / -1 for exact linear relations and NaN for a constant vector', () => {
    const a = [1, 2, 3, 4, 5];
    expect(
      pearson(
        a,
        a.map((v) => 2 * v + 7),
      ),
    ).toBeCloseTo(1, 14);
    expect(
      pearson(
        a,
        a.map((v) => -v),
      ),
    ).toBeCloseTo(-1, 14);
    expect(pearson(a, [3, 3, 3, 3, 3])).toBeNaN();
  });

  it('is invariant to offset and scale, the property that makes SNV irrelevant to it', () => {
    const g = gaussian(seededRandom(7));
    const a = Array.from({ length: 500 }, () => g());
    const b = a.map((v) => v + g());
    expect(
      pearson(
        a.map((v) => 4 * v - 2),
        b,
      ),
    ).toBeCloseTo(pearson(a, b), 12);
  });

  it('equals the dot product of centred unit vectors (the library search identity)', () => {
    const g = gaussian(seededRandom(3));
    const a = Array.from({ length: 1000 }, () => g());
    const b = a.map((v) => v * 0.5 + g());
    const ua = centredUnit(a);
    expect(dot(ua, ua)).toBeCloseTo(1, 12);
    expect(ua.reduce((s, v) => s + v, 0)).toBeCloseTo(0, 12);
    expect(dot(ua, centredUnit(b))).toBeCloseTo(pearson(a, b), 12);
  });

  it('refuses vectors of different length', () => {
    expect(() => pearson([1, 2, 3], [1, 2])).toThrow(RangeError);
  });
});
