/**
 * Baseline correction on the method grid.
 *  - offset: subtract the lowest used value, so the spectrum starts at 0;
 *  - linear: subtract the straight line through the lowest point of the first and
 *    of the last tenth of the used range (a two-point baseline, common practice);
 *  - iterative: adaptive iteratively reweighted penalised least squares (airPLS,
 *    Zhang, Chen & Liang, Analyst 135:1138, 2010; reference from memory) through
 *    ml-airpls. That package penalises first differences, so across a band (where
 *    the weights drop to zero) its baseline runs straight from one side to the
 *    other; its default smoothing parameter (10) kept 20-260 cm-1 wide bands whole
 *    on a curved baseline in tests/unit/spectra-baseline.test.ts, while stiffer
 *    values left offsets. It takes tens of milliseconds per spectrum, so the
 *    default methods use the linear baseline.
 */
import airPLS from 'ml-airpls';
import type { BaselineMode } from './method';

/** airPLS smoothing parameter (the ml-airpls default; see above). */
export const AIRPLS_LAMBDA = 10;

function usedIndices(mask: Uint8Array): Int32Array {
  let n = 0;
  for (let i = 0; i < mask.length; i++) n += mask[i] ? 1 : 0;
  const idx = new Int32Array(n);
  for (let i = 0, k = 0; i < mask.length; i++) if (mask[i]) idx[k++] = i;
  return idx;
}

function lowestIn(y: Float64Array, idx: Int32Array, from: number, to: number): number {
  let best = idx[from];
  for (let k = from + 1; k < to; k++) if (y[idx[k]] < y[best]) best = idx[k];
  return best;
}

export function correctBaseline(x: Float64Array, y: Float64Array, mask: Uint8Array, mode: BaselineMode): Float64Array {
  // Explicit loops: TypedArray map/from with a callback is many times slower.
  if (mode === 'none') return y.slice();
  const idx = usedIndices(mask);
  if (idx.length < 2) return y.slice();
  const out = new Float64Array(y.length);
  if (mode === 'offset') {
    let min = Infinity;
    for (const i of idx) if (y[i] < min) min = y[i];
    for (let i = 0; i < y.length; i++) out[i] = y[i] - min;
    return out;
  }
  if (mode === 'linear') {
    const tenth = Math.max(1, Math.floor(idx.length / 10));
    const a = lowestIn(y, idx, 0, tenth);
    const b = lowestIn(y, idx, idx.length - tenth, idx.length);
    const slope = (y[b] - y[a]) / (x[b] - x[a]);
    for (let i = 0; i < y.length; i++) out[i] = y[i] - (y[a] + slope * (x[i] - x[a]));
    return out;
  }
  const { corrected } = airPLS(x, y, { lambda: AIRPLS_LAMBDA });
  return Float64Array.from(corrected);
}
