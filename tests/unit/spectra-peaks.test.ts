import { describe, expect, it } from 'vitest';
import { findPeaks, parabolaVertex } from '../../server/spectra/peaks';
import { makeGrid } from '../../server/spectra/resample';
import { gaussian, seededRandom, syntheticSpectrum } from './spectra-analysis-data';

describe('parabola vertex', () => {
  it('is exact for a parabola, with any spacing', () => {
    const f = (x: number) => -2 * (x - 1601.37) ** 2 + 5;
    const v = parabolaVertex(1599.2, f(1599.2), 1601.1, f(1601.1), 1602.9, f(1602.9));
    expect(v.x).toBeCloseTo(1601.37, 9);
    expect(v.y).toBeCloseTo(5, 9);
  });
});

describe('peak picking', () => {
  it('finds Gaussian bands at sub-grid positions to better than a tenth of the spacing', () => {
    const bands = [
      { at: 1000.37, height: 1, fwhm: 12 },
      { at: 1600.81, height: 0.5, fwhm: 15 },
      { at: 2930.5, height: 0.3, fwhm: 30 },
    ];
    const s = syntheticSpectrum(bands, { from: 700, to: 3800, step: 1.86, offset: 0 });
    const peaks = findPeaks(s.x, s.y, { minProminence: 0.05 });
    expect(peaks.map((p) => p.position)).toHaveLength(3);
    peaks.forEach((p, i) => {
      expect(Math.abs(p.position - bands[i].at)).toBeLessThan(0.186);
      // Prominence is read at the highest sample, a little below the true maximum of a narrow band.
      expect(Math.abs(p.prominence - bands[i].height) / bands[i].height).toBeLessThan(0.02);
      expect(Math.abs(p.height - bands[i].height) / bands[i].height).toBeLessThan(0.005);
      // Full width at half prominence of a Gaussian = its FWHM.
      expect(Math.abs(p.width - bands[i].fwhm)).toBeLessThan(0.5);
    });
  });

  it('measures prominence against the higher of the two separating minima', () => {
    // A weak shoulder band next to a strong one sits on its flank: prominence < height.
    const s = syntheticSpectrum(
      [
        { at: 1700, height: 1, fwhm: 20 },
        { at: 1730, height: 0.3, fwhm: 10 },
      ],
      { from: 1500, to: 1900, offset: 0 },
    );
    const peaks = findPeaks(s.x, s.y, { minProminence: 0.01 });
    expect(peaks).toHaveLength(2);
    const shoulder = peaks.find((p) => Math.abs(p.position - 1730) < 2);
    expect(shoulder?.prominence).toBeLessThan(0.3);
    expect(shoulder?.prominence).toBeGreaterThan(0.15);
  });

  it('drops peaks below the prominence threshold (noise) and peaks inside masked regions', () => {
    const g = gaussian(seededRandom(11));
    const s = syntheticSpectrum(
      [
        { at: 1000, height: 1, fwhm: 20 },
        { at: 2350, height: 0.5, fwhm: 20 },
      ],
      { from: 700, to: 3800, offset: 0 },
    );
    const y = s.y.map((v) => v + 0.002 * g());
    const grid = makeGrid({ from: 700, to: 3800 }, 1);
    const mask = grid.map((v) => (v >= 2280 && v <= 2400 ? 0 : 1)) as unknown as Uint8Array;
    const peaks = findPeaks(s.x, y, { minProminence: 0.05, mask: Uint8Array.from(mask) });
    expect(peaks).toHaveLength(1);
    expect(peaks[0].position).toBeCloseTo(1000, 0);
  });

  it('handles flat tops and monotonic data', () => {
    const x = Float64Array.from({ length: 9 }, (_, i) => i);
    const flat = findPeaks(x, Float64Array.from([0, 1, 2, 3, 3, 3, 2, 1, 0]), { minProminence: 0.5 });
    expect(flat).toHaveLength(1);
    expect(flat[0].position).toBe(4);
    expect(findPeaks(x, Float64Array.from([0, 1, 2, 3, 4, 5, 6, 7, 8]), { minProminence: 0 })).toHaveLength(0);
  });
});
