/**
 * Preparation of a spectrum for one identity method, in this order: range check,
 * resampling to the method grid, mask of excluded regions, baseline,
 * normalisation, Savitzky-Golay smoothing or derivative. Alongside the prepared
 * values it keeps a smoothed, baseline-corrected absorbance trace (scaled so the
 * strongest band is 1) and the peaks picked on it, for band concordance.
 */
import { correctBaseline } from './baseline';
import { type IdentityMethod, preparationKey } from './method';
import { normalise } from './normalise';
import { findPeaks, type Peak } from './peaks';
import { assertCovers, makeGrid, resampleLinear } from './resample';
import { savitzkyGolay } from './savitzky-golay';
import type { Spectrum } from './types';

/**
 * Peaks are detected down to this fraction of the method's peakProminence, so a
 * reference band that is a little weaker in the sample (noise, contact) is still
 * found; only bands at or above peakProminence count as reference bands.
 */
export const DETECTION_RATIO = 0.3;

export interface PreparedSpectrum {
  /** preparationKey(method) of the method that prepared it. */
  key: string;
  /** Full method grid, cm-1. */
  grid: Float64Array;
  /** 1 where the grid point is used, 0 inside excluded regions. */
  mask: Uint8Array;
  /** Used grid points (mask = 1), cm-1. */
  x: Float64Array;
  /** Prepared values at the used points: what the correlation criterion compares. */
  y: Float64Array;
  /** Savitzky-Golay first derivative at the used points, when the method scores it; else null. */
  derivative: Float64Array | null;
  /** Baseline-corrected, smoothed absorbance on the full grid, scaled 0..1 over the used points. */
  trace: Float64Array;
  /** Peaks of the trace down to DETECTION_RATIO * peakProminence (empty when band picking is off). */
  peaks: Peak[];
}

/** 1 for grid points outside every excluded region. */
export function exclusionMask(grid: Float64Array, method: IdentityMethod): Uint8Array {
  const mask = new Uint8Array(grid.length).fill(1);
  for (const r of method.excludedRegions) {
    for (let i = 0; i < grid.length; i++) if (grid[i] >= r.from && grid[i] <= r.to) mask[i] = 0;
  }
  return mask;
}

function compact(v: Float64Array, mask: Uint8Array, count: number): Float64Array {
  const out = new Float64Array(count);
  let k = 0;
  for (let i = 0; i < v.length; i++) if (mask[i]) out[k++] = v[i];
  return out;
}

function scaleToUnit(v: Float64Array, mask: Uint8Array): Float64Array {
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < v.length; i++) {
    if (!mask[i]) continue;
    if (v[i] < min) min = v[i];
    if (v[i] > max) max = v[i];
  }
  const span = max - min;
  const out = new Float64Array(v.length);
  if (span > 0) for (let i = 0; i < v.length; i++) out[i] = (v[i] - min) / span;
  return out;
}

interface GridLayout {
  grid: Float64Array;
  mask: Uint8Array;
  x: Float64Array;
  used: number;
}

/** Grid, mask and used x are the same for every spectrum of a method: built once and shared (read-only). */
const layouts = new Map<string, GridLayout>();

function layoutFor(method: IdentityMethod): GridLayout {
  const k = JSON.stringify([
    method.range.from,
    method.range.to,
    method.gridStep,
    method.excludedRegions.map((r) => [r.from, r.to]),
  ]);
  let l = layouts.get(k);
  if (!l) {
    const grid = makeGrid(method.range, method.gridStep);
    const mask = exclusionMask(grid, method);
    let used = 0;
    for (const m of mask) used += m;
    l = { grid, mask, x: compact(grid, mask, used), used };
    if (layouts.size >= 64) layouts.clear();
    layouts.set(k, l);
  }
  return l;
}

/**
 * Prepares a spectrum; throws SpectrumError RANGE_NOT_COVERED when it does not
 * span the method range. grid, mask and x are shared between spectra prepared
 * for the same grid: treat them as read-only.
 */
export function prepare(spectrum: Spectrum, method: IdentityMethod): PreparedSpectrum {
  assertCovers(spectrum.x, method.range);
  const step = method.gridStep;
  const { grid, mask, x, used } = layoutFor(method);
  const raw = resampleLinear(spectrum.x, spectrum.y, grid);
  const corrected = correctBaseline(grid, raw, mask, method.baseline);
  const normalised = normalise(corrected, mask, method.normalisation);
  const main = savitzkyGolay(normalised, step, method.smoothing);
  let derivative: Float64Array | null = null;
  if (method.thresholds.minDerivativeCorrelation !== null) {
    const d1 =
      method.smoothing.derivative === 1
        ? main
        : savitzkyGolay(normalised, step, { ...method.smoothing, derivative: 1 });
    derivative = compact(d1, mask, used);
  }
  // Normalisation is affine, so the scaled trace of the smoothed, normalised values
  // equals that of the smoothed, baseline-corrected absorbance.
  const smooth =
    method.smoothing.derivative === 0 ? main : savitzkyGolay(corrected, step, { ...method.smoothing, derivative: 0 });
  const trace = scaleToUnit(smooth, mask);
  const peaks =
    method.peakProminence === null
      ? []
      : findPeaks(grid, trace, { minProminence: method.peakProminence * DETECTION_RATIO, mask });
  return {
    key: preparationKey(method),
    grid,
    mask,
    x,
    y: compact(main, mask, used),
    derivative,
    trace,
    peaks,
  };
}
