import { describe, expect, it } from 'vitest';
import { correctBaseline } from '../../server/spectra/baseline';
import { normalise } from '../../server/spectra/normalise';
import { makeGrid } from '../../server/spectra/resample';
import { syntheticSpectrum } from './spectra-analysis-data';

const all = (n: number) => new Uint8Array(n).fill(1);

describe('baseline correction', () => {
  const grid = makeGrid({ from: 700, to: 3800 }, 1);
  const band = syntheticSpectrum(
    [
      { at: 1700, height: 0.5, fwhm: 20 },
      { at: 2900, height: 0.2, fwhm: 40 },
    ],
    { from: 700, to: 3800, offset: 0 },
  );

  it('offset: the lowest used point becomes 0', () => {
    const y = band.y.map((v) => v + 0.3);
    const c = correctBaseline(grid, y, all(y.length), 'offset');
    expect(Math.min(...c)).toBeCloseTo(0, 12);
    expect(c[1000] - c[500]).toBeCloseTo(y[1000] - y[500], 12);
  });

  it('linear: removes a tilted straight baseline', () => {
    const y = band.y.map((v, i) => v + 0.05 + 2e-5 * (grid[i] - 700));
    const c = correctBaseline(grid, y, all(y.length), 'linear');
    let worst = 0;
    for (let i = 0; i < c.length; i++) worst = Math.max(worst, Math.abs(c[i] - band.y[i]));
    expect(worst).toBeLessThan(1e-6);
  });

  it('iterative (airPLS): removes a curved baseline and keeps narrow and broad bands', () => {
    const bands = syntheticSpectrum(
      [
        { at: 1700, height: 0.5, fwhm: 20 },
        { at: 2900, height: 0.2, fwhm: 40 },
        { at: 3330, height: 0.3, fwhm: 260 },
        { at: 1030, height: 0.6, fwhm: 100 },
      ],
      { from: 700, to: 3800, offset: 0 },
    );
    const curve = (v: number) => 0.1 + 0.08 * Math.sin((v - 700) / 900);
    const y = bands.y.map((v, i) => v + curve(grid[i]));
    const c = correctBaseline(grid, y, all(y.length), 'iterative');
    const at = (v: number) => c[Math.round(v - 700)];
    expect(at(1700)).toBeCloseTo(0.5, 2);
    expect(at(1030)).toBeCloseTo(0.6, 2);
    expect(at(3330)).toBeCloseTo(0.3, 1);
    // Far from the bands the corrected spectrum is near zero (within 2 % of the strongest band).
    for (const v of [700, 1400, 2100, 2500, 3800]) expect(Math.abs(at(v)), `at ${v}`).toBeLessThan(0.012);
  });

  it('none: returns a copy', () => {
    const c = correctBaseline(grid, band.y, all(band.y.length), 'none');
    expect(c).not.toBe(band.y);
    expect(Array.from(c)).toEqual(Array.from(band.y));
  });
});

describe('normalisation', () => {
  const y = Float64Array.from([1, 2, 3, 4, 100, 5]);
  const mask = Uint8Array.from([1, 1, 1, 1, 0, 1]);

  it('SNV: mean 0 and standard deviation 1 over the used points only', () => {
    const s = normalise(y, mask, 'snv');
    const used = Array.from(s).filter((_, i) => mask[i]);
    const mean = used.reduce((a, b) => a + b, 0) / used.length;
    const sd = Math.sqrt(used.reduce((a, b) => a + (b - mean) ** 2, 0) / (used.length - 1));
    expect(mean).toBeCloseTo(0, 12);
    expect(sd).toBeCloseTo(1, 12);
  });

  it('vector: Euclidean norm 1 over the used points', () => {
    const v = normalise(y, mask, 'vector');
    const norm = Math.sqrt(
      Array.from(v)
        .filter((_, i) => mask[i])
        .reduce((a, b) => a + b * b, 0),
    );
    expect(norm).toBeCloseTo(1, 12);
  });
});
