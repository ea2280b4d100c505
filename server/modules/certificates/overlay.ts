/**
 * The certificate's small spectrum figure: sample and reference traces as SVG vector graphics,
 * wavenumber running from high (left) to low (right) as infrared spectra are drawn. The traces
 * are the engine's prepared traces (baseline-corrected, smoothed absorbance scaled 0..1 on the
 * method grid); excluded regions are left as gaps.
 */

export interface OverlayInput {
  grid: ArrayLike<number>;
  mask: ArrayLike<number>;
  sample: ArrayLike<number>;
  reference: ArrayLike<number>;
  sampleLabel: string;
  referenceLabel: string;
  width?: number;
  height?: number;
}

export const SAMPLE_COLOUR = '#0f5e6e'; // petrol, solid: the petrol token of src/index.css
// muted, dashed: the muted token of src/index.css (#6b7280 reached only 4.49:1 on paper and is no longer ours)
export const REFERENCE_COLOUR = '#5f6673';

function esc(s: string): string {
  return s.replace(/[&<>"]/g, (c) => ({ '&': '&amp;', '<': '&lt;', '>': '&gt;', '"': '&quot;' })[c]!);
}

/** At most ~2 points per pixel column: min and max of each bucket, in order, so peaks survive. */
function decimate(idx: number[], ys: ArrayLike<number>, buckets: number): number[] {
  if (idx.length <= buckets * 2) return idx;
  const out: number[] = [];
  const size = idx.length / buckets;
  for (let b = 0; b < buckets; b++) {
    const from = Math.floor(b * size);
    const to = Math.min(idx.length, Math.floor((b + 1) * size));
    let lo = from;
    let hi = from;
    for (let k = from; k < to; k++) {
      if (ys[idx[k]] < ys[idx[lo]]) lo = k;
      if (ys[idx[k]] > ys[idx[hi]]) hi = k;
    }
    out.push(idx[Math.min(lo, hi)]);
    if (lo !== hi) out.push(idx[Math.max(lo, hi)]);
  }
  return out;
}

/** Contiguous runs of used grid points (mask = 1). */
function runs(mask: ArrayLike<number>): number[][] {
  const out: number[][] = [];
  let cur: number[] = [];
  for (let i = 0; i < mask.length; i++) {
    if (mask[i]) cur.push(i);
    else if (cur.length) {
      out.push(cur);
      cur = [];
    }
  }
  if (cur.length) out.push(cur);
  return out;
}

export function overlaySvg(o: OverlayInput): string {
  const W = o.width ?? 515;
  const H = o.height ?? 180;
  const left = 28;
  const right = 8;
  const top = 26;
  const bottom = 26;
  const pw = W - left - right;
  const ph = H - top - bottom;
  const n = o.grid.length;
  const xHigh = Math.max(o.grid[0], o.grid[n - 1]);
  const xLow = Math.min(o.grid[0], o.grid[n - 1]);
  const px = (wn: number) => left + ((xHigh - wn) / (xHigh - xLow)) * pw;
  let yMin = Infinity;
  let yMax = -Infinity;
  for (const ys of [o.sample, o.reference]) {
    for (let i = 0; i < n; i++) {
      if (!o.mask[i] || !Number.isFinite(ys[i])) continue;
      yMin = Math.min(yMin, ys[i]);
      yMax = Math.max(yMax, ys[i]);
    }
  }
  if (!(yMax > yMin)) {
    yMin = 0;
    yMax = 1;
  }
  const py = (v: number) => top + ph - ((v - yMin) / (yMax - yMin)) * ph;
  const f = (v: number) => v.toFixed(1);

  const path = (ys: ArrayLike<number>) => {
    const parts: string[] = [];
    for (const run of runs(o.mask)) {
      const bucketCount = Math.max(2, Math.round(((run.length / n) * pw) / 2));
      const pts = decimate(run, ys, bucketCount).filter((i) => Number.isFinite(ys[i]));
      if (pts.length < 2) continue;
      parts.push(`M${pts.map((i) => `${f(px(o.grid[i]))} ${f(py(ys[i]))}`).join(' L')}`);
    }
    return parts.join(' ');
  };

  const ticks: string[] = [];
  const step = xHigh - xLow > 2500 ? 500 : xHigh - xLow > 1000 ? 200 : 100;
  for (let t = Math.ceil(xLow / step) * step; t <= xHigh; t += step) {
    const x = f(px(t));
    ticks.push(`<line x1="${x}" y1="${top + ph}" x2="${x}" y2="${top + ph + 3}" stroke="#333" stroke-width="0.5"/>`);
    ticks.push(`<text x="${x}" y="${top + ph + 11}" font-size="6.5" text-anchor="middle" fill="#333">${t}</text>`);
  }
  const gaps: string[] = [];
  let gapStart = -1;
  for (let i = 0; i <= n; i++) {
    const used = i < n && o.mask[i];
    if (!used && gapStart < 0 && i < n) gapStart = i;
    if ((used || i === n) && gapStart >= 0) {
      const x1 = px(o.grid[gapStart]);
      const x2 = px(o.grid[i - 1]);
      gaps.push(
        `<rect x="${f(Math.min(x1, x2))}" y="${top}" width="${f(Math.abs(x2 - x1))}" height="${ph}" fill="#eeeeee"/>`,
      );
      gapStart = -1;
    }
  }
  return [
    `<svg xmlns="http://www.w3.org/2000/svg" width="${W}" height="${H}" viewBox="0 0 ${W} ${H}">`,
    ...gaps,
    `<rect x="${left}" y="${top}" width="${pw}" height="${ph}" fill="none" stroke="#333" stroke-width="0.5"/>`,
    `<path d="${path(o.reference)}" fill="none" stroke="${REFERENCE_COLOUR}" stroke-width="0.9" stroke-dasharray="3 1.5"/>`,
    `<path d="${path(o.sample)}" fill="none" stroke="${SAMPLE_COLOUR}" stroke-width="0.7"/>`,
    ...ticks,
    `<text x="${left + pw / 2}" y="${H - 3}" font-size="7" text-anchor="middle" fill="#333">Wavenumber (cm-1), high to low</text>`,
    `<text x="10" y="${top + ph / 2}" font-size="7" text-anchor="middle" fill="#333" transform="rotate(-90 10 ${top + ph / 2})">Absorbance (scaled)</text>`,
    `<line x1="${left + 6}" y1="${top - 17}" x2="${left + 22}" y2="${top - 17}" stroke="${SAMPLE_COLOUR}" stroke-width="1.2"/>`,
    `<text x="${left + 26}" y="${top - 14.5}" font-size="7" fill="#333">${esc(o.sampleLabel)}</text>`,
    `<line x1="${left + 6}" y1="${top - 7}" x2="${left + 22}" y2="${top - 7}" stroke="${REFERENCE_COLOUR}" stroke-width="1.2" stroke-dasharray="3 1.5"/>`,
    `<text x="${left + 26}" y="${top - 4.5}" font-size="7" fill="#333">${esc(o.referenceLabel)}</text>`,
    '</svg>',
  ].join('');
}
