/**
 * Resampling onto a method's wavenumber grid by linear interpolation. A spectrum
 * that does not reach both ends of the method range is refused: extrapolating
 * measured data would invent absorbances.
 */
import { SpectrumError } from './errors';
import type { WavenumberRange } from './method';

/** Grid from range.from to range.to (both included when the step divides the range) every `step` cm-1. */
export function makeGrid(range: WavenumberRange, step: number): Float64Array {
  const n = Math.floor((range.to - range.from) / step + 1e-9) + 1;
  const grid = new Float64Array(n);
  for (let i = 0; i < n; i++) grid[i] = range.from + i * step;
  return grid;
}

/** Throws RANGE_NOT_COVERED unless x (ascending) spans the whole range. */
export function assertCovers(x: Float64Array, range: WavenumberRange): void {
  const lo = x[0];
  const hi = x[x.length - 1];
  // A rounding allowance of a millionth of a cm-1 on each end, no more.
  if (lo > range.from + 1e-6 || hi < range.to - 1e-6) {
    throw new SpectrumError(
      'RANGE_NOT_COVERED',
      `The spectrum covers ${lo.toFixed(1)} to ${hi.toFixed(1)} cm-1, but the method needs ${range.from} to ${range.to} cm-1. ` +
        'Measure over the full range of the method, or use a method made for this range.',
      { spectrumFrom: lo, spectrumTo: hi, methodFrom: range.from, methodTo: range.to },
    );
  }
}

/** Linear interpolation of y(x) (x strictly ascending) at every grid point (ascending, inside x). */
export function resampleLinear(x: Float64Array, y: Float64Array, grid: Float64Array): Float64Array {
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
