import { describe, expect, it } from 'vitest';
import { savitzkyGolay } from '../../server/spectra/savitzky-golay';

/** Output of the engine's filter at positions centre-m..centre+m for a unit impulse at `centre`. */
function impulseResponse(windowSize: number, polynomial: number, derivative: 0 | 1 | 2): number[] {
  const n = 41;
  const centre = 20;
  const y = new Float64Array(n);
  y[centre] = 1;
  const out = savitzkyGolay(y, 1, { windowSize, polynomial, derivative });
  const m = (windowSize - 1) / 2;
  // Output at centre - j equals the convolution weight w_j applied to y[i + j].
  return Array.from({ length: windowSize }, (_, k) => out[centre - (k - m)]);
}

describe('Savitzky-Golay filter', () => {
  // Source: Savitzky & Golay, Anal. Chem. 36:1627 (1964), convolution tables (with the
  // corrections of Steinier, Termonia & Deltour, Anal. Chem. 44:1906, 1972); the values are
  // listed in ../shared/domain-facts.md section 8.
  it('5-point quadratic smoothing equals (-3, 12, 17, 12, -3)/35', () => {
    const w = impulseResponse(5, 2, 0);
    [-3, 12, 17, 12, -3].forEach((c, i) => expect(w[i]).toBeCloseTo(c / 35, 12));
  });

  it('7-point quadratic smoothing equals (-2, 3, 6, 7, 6, 3, -2)/21', () => {
    const w = impulseResponse(7, 2, 0);
    [-2, 3, 6, 7, 6, 3, -2].forEach((c, i) => expect(w[i]).toBeCloseTo(c / 21, 12));
  });

  it('9-point quadratic smoothing equals (-21, 14, 39, 54, 59, 54, 39, 14, -21)/231', () => {
    const w = impulseResponse(9, 2, 0);
    [-21, 14, 39, 54, 59, 54, 39, 14, -21].forEach((c, i) => expect(w[i]).toBeCloseTo(c / 231, 12));
  });

  it('5-point first derivative equals (-2, -1, 0, 1, 2)/10', () => {
    const w = impulseResponse(5, 2, 1);
    [-2, -1, 0, 1, 2].forEach((c, i) => expect(w[i]).toBeCloseTo(c / 10, 12));
  });

  it('5-point second derivative equals (2, -1, -2, -1, 2)/7', () => {
    const w = impulseResponse(5, 2, 2);
    [2, -1, -2, -1, 2].forEach((c, i) => expect(w[i]).toBeCloseTo(c / 7, 12));
  });

  it('derivatives are per cm-1: slope of a line, curvature of a parabola, edges included', () => {
    const step = 2;
    const x = Float64Array.from({ length: 60 }, (_, i) => 1000 + i * step);
    const line = x.map((v) => 3 * v + 1);
    const d1 = savitzkyGolay(line, step, { windowSize: 9, polynomial: 2, derivative: 1 });
    for (const v of d1) expect(v).toBeCloseTo(3, 9);
    const parabola = x.map((v) => 0.5 * (v - 1050) ** 2);
    const d2 = savitzkyGolay(parabola, step, { windowSize: 7, polynomial: 2, derivative: 2 });
    for (const v of d2) expect(v).toBeCloseTo(1, 6);
  });

  it('smoothing keeps a cubic unchanged with polynomial 3', () => {
    const y = Float64Array.from({ length: 50 }, (_, i) => 0.001 * i ** 3 - 0.2 * i + 4);
    const s = savitzkyGolay(y, 1, { windowSize: 11, polynomial: 3, derivative: 0 });
    s.forEach((v, i) => expect(v).toBeCloseTo(y[i], 8));
  });
});
