import { describe, expect, it } from 'vitest';
import { SpectrumError } from '../../server/spectra/errors';
import { defaultMidIrAtrMethod, defaultNirMethod } from '../../server/spectra/method';
import { assertCovers, makeGrid, resampleLinear } from '../../server/spectra/resample';
import { listSet, loadReference } from './spectra-analysis-data';

/** The hand-written linear interpolation of engine 1.0.0, kept here as the reference for the swap. */
function engine1Resample(x: Float64Array, y: Float64Array, grid: Float64Array): Float64Array {
  const out = new Float64Array(grid.length);
  const last = x.length - 1;
  let j = 0;
  for (let i = 0; i < grid.length; i++) {
    const g = grid[i];
    while (j < last - 1 && x[j + 1] <= g) j++;
    const x0 = x[j];
    const x1 = x[j + 1];
    const t = g <= x0 ? 0 : g >= x1 ? 1 : (g - x0) / (x1 - x0);
    out[i] = t === 0 ? y[j] : t === 1 ? y[j + 1] : y[j] + t * (y[j + 1] - y[j]);
  }
  return out;
}

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

  it('ml-spectra-processing (engine 2.0.0) gives engine 1.0.0 resampling to 1e-15 of each spectrum, on all real data', () => {
    // Every spectrum of ../shared/reference-data that covers a default method's range, on that method's grid,
    // and on a 0.37 cm-1 grid that falls between the measured points everywhere.
    let spectra = 0;
    let worst = 0;
    const sets = ['atr-ftir', 'atr-ftir/biodiesel', 'atr-ftir-fibres', 'ftir-oils', 'ftir-starch', 'nir-polyolefins'];
    for (const f of [...sets.flatMap(listSet), 'jcamp/SBO.jdx']) {
      const s = loadReference(f);
      let scale = 0;
      for (const v of s.y) scale = Math.max(scale, Math.abs(v));
      const lo = s.x[0];
      const hi = s.x[s.x.length - 1];
      const grids = [defaultMidIrAtrMethod, defaultNirMethod]
        .filter((m) => lo <= m.range.from && hi >= m.range.to)
        .map((m) => makeGrid(m.range, m.gridStep));
      grids.push(makeGrid({ from: Math.ceil(lo), to: Math.floor(hi) }, 0.37));
      for (const grid of grids) {
        const a = engine1Resample(s.x, s.y, grid);
        const b = resampleLinear(s.x, s.y, grid);
        for (let i = 0; i < grid.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]) / scale);
      }
      spectra++;
    }
    expect(spectra).toBeGreaterThan(120);
    expect(worst).toBeLessThan(1e-15);
    expect(worst).toBeGreaterThan(0); // the two formulas do round differently, so the bound is a real one
  });
});
