/**
 * Peak picking: local maxima whose topographic prominence (height above the higher
 * of the two lowest points separating it from taller ground on either side, the
 * usual definition) reaches a threshold. Positions are refined below the grid
 * spacing by the vertex of the parabola through the maximum and its two
 * neighbours; widths are full widths at half prominence.
 */

export interface Peak {
  /** Sub-grid position (cm-1) from the 3-point parabola. */
  position: number;
  /** Index of the highest sample point. */
  index: number;
  /** Height at the parabola vertex (y units). */
  height: number;
  /** Prominence (y units). */
  prominence: number;
  /** Full width at half prominence, cm-1. */
  width: number;
}

/** Vertex {x, y} of the parabola through three points (x ascending, any spacing). */
export function parabolaVertex(
  x0: number,
  y0: number,
  x1: number,
  y1: number,
  x2: number,
  y2: number,
): { x: number; y: number } {
  // Shift to x1 for numerical stability: y = a t^2 + b t + y1, t = x - x1.
  const t0 = x0 - x1;
  const t2 = x2 - x1;
  const d0 = (y0 - y1) / t0;
  const d2 = (y2 - y1) / t2;
  const a = (d2 - d0) / (t2 - t0);
  const b = d0 - a * t0;
  if (a >= 0 || !Number.isFinite(a)) return { x: x1, y: y1 };
  const t = -b / (2 * a);
  // The vertex of a true local maximum lies between its neighbours.
  const tc = Math.min(Math.max(t, t0), t2);
  return { x: x1 + tc, y: y1 + b * tc + a * tc * tc };
}

export interface PeakOptions {
  /** Minimum prominence in y units. */
  minProminence: number;
  /** Optional mask: peaks whose maximum lies where mask = 0 are dropped. */
  mask?: Uint8Array;
}

function halfCrossing(x: Float64Array, y: Float64Array, i: number, level: number, stop: number, dir: 1 | -1): number {
  let j = i;
  while (j !== stop && y[j + dir] >= level) j += dir;
  if (j === stop) return x[j];
  const ya = y[j];
  const yb = y[j + dir];
  const f = ya === yb ? 0 : (ya - level) / (ya - yb);
  return x[j] + f * (x[j + dir] - x[j]);
}

/** Peaks of y(x), x ascending, sorted by position. */
export function findPeaks(x: Float64Array, y: Float64Array, options: PeakOptions): Peak[] {
  const n = y.length;
  const peaks: Peak[] = [];
  let i = 1;
  while (i < n - 1) {
    if (!(y[i] > y[i - 1])) {
      i++;
      continue;
    }
    // Walk over a flat top to its right end.
    let k = i;
    while (k < n - 1 && y[k + 1] === y[i]) k++;
    if (k >= n - 1 || !(y[k + 1] < y[i])) {
      i = k + 1;
      continue;
    }
    const top = (i + k) >> 1;
    const h = y[i];
    let leftMin = h;
    let l = i - 1;
    while (l >= 0 && y[l] <= h) {
      if (y[l] < leftMin) leftMin = y[l];
      l--;
    }
    let rightMin = h;
    let r = k + 1;
    while (r < n && y[r] <= h) {
      if (y[r] < rightMin) rightMin = y[r];
      r++;
    }
    const prominence = h - Math.max(leftMin, rightMin);
    if (prominence >= options.minProminence && (!options.mask || options.mask[top])) {
      const v =
        i === k ? parabolaVertex(x[i - 1], y[i - 1], x[i], y[i], x[i + 1], y[i + 1]) : { x: (x[i] + x[k]) / 2, y: h };
      const level = h - prominence / 2;
      const left = halfCrossing(x, y, i, level, Math.max(l, 0), -1);
      const right = halfCrossing(x, y, k, level, Math.min(r, n - 1), 1);
      peaks.push({ position: v.x, index: top, height: v.y, prominence, width: right - left });
    }
    i = k + 1;
  }
  return peaks;
}
