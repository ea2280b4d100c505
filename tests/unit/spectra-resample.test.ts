import { describe, expect, it } from 'vitest';
import { SpectrumError } from '../../server/spectra/errors';
import { assertCovers, makeGrid, resampleLinear } from '../../server/spectra/resample';

describe('resampling onto the method grid', () => {
  it('builds the grid with both ends of the range', () => {
    const g = makeGrid({ from: 700, to: 3800 }, 1);
    expect(g.length).toBe(3101);
    expect(g[0]).toBe(700);
    expect(g[g.length - 1]).toBe(3800);
    expect(makeGrid({ from: 4200, to: 9000 }, 4).length).toBe(1201);
  });

  it('reproduces a straight line exactly and interpolates between irregular points', () => {
    const x = Float64Array.from([650.4, 652.3, 655.0, 655.9, 660.0, 661.7]);
    const y = x.map((v) => 0.01 * v - 3);
    const grid = makeGrid({ from: 651, to: 661 }, 0.5);
    const r = resampleLinear(x, y, grid);
    r.forEach((v, i) => expect(v).toBeCloseTo(0.01 * grid[i] - 3, 12));
    // Between (652.3, 1) and (655.0, 4): at 653.65 the value is 2.5.
    const r2 = resampleLinear(
      Float64Array.from([652.3, 655.0]),
      Float64Array.from([1, 4]),
      Float64Array.from([653.65]),
    );
    expect(r2[0]).toBeCloseTo(2.5, 12);
  });

  it('hits measured points exactly when grid and data coincide', () => {
    const x = Float64Array.from({ length: 100 }, (_, i) => 1000 + i);
    const y = x.map((v) => Math.sin(v / 7));
    const r = resampleLinear(x, y, makeGrid({ from: 1010, to: 1090 }, 1));
    r.forEach((v, i) => expect(v).toBe(y[i + 10]));
  });

  it('refuses a spectrum that does not reach both ends of the method range (RANGE_NOT_COVERED)', () => {
    const x = Float64Array.from({ length: 100 }, (_, i) => 700.74 + i * 31);
    let err: unknown;
    try {
      assertCovers(x, { from: 700, to: 3800 });
    } catch (e) {
      err = e;
    }
    expect(err).toBeInstanceOf(SpectrumError);
    expect((err as SpectrumError).code).toBe('RANGE_NOT_COVERED');
    expect((err as SpectrumError).message).toMatch(/700\.7 to/);
    expect(() => assertCovers(x, { from: 800, to: 3700 })).not.toThrow();
  });
});
