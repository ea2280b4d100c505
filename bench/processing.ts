/**
 * Hand-written engine functions against their ml-spectra-processing counterparts (issue 17 item 5):
 * the same inputs through both, timed in alternating rounds (A B A B ...) so that a busy machine
 * slows both alike, with the largest difference of the results. The engine keeps its own
 * function where the package is slower or less exact, and says so in the function's comment.
 *
 * Inputs are synthetic and deterministic: a 3,736-point mid-IR spectrum on a 0.964 cm-1 grid
 * (an instrument's own spacing, not a multiple of the method grid) resampled to the default
 * method grid (700-3800 cm-1, 1 cm-1), with the CO2 and diamond regions masked.
 *
 *   npm run bench -- processing
 */
import { xDotProduct, xMean, xMedian, xNorm, xStandardDeviation, xyInterpolateLinear } from 'ml-spectra-processing';
import { centredUnit, dot } from '../server/spectra/correlation';
import { defaultMidIrAtrMethod } from '../server/spectra/method';
import { normalise } from '../server/spectra/normalise';
import { exclusionMask } from '../server/spectra/preprocess';
import { estimateNoise } from '../server/spectra/quality';
import { makeGrid } from '../server/spectra/resample';

/** Deterministic PRNG (mulberry32). */
function prng(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

function spectrum(): { x: Float64Array; y: Float64Array } {
  const rand = prng(7);
  const n = 3736;
  const x = Float64Array.from({ length: n }, (_, i) => 400.3 + i * 0.964);
  const bands = Array.from({ length: 18 }, () => ({
    at: 700 + rand() * 3100,
    h: 0.05 + rand() * 0.5,
    s: 3 + rand() * 20,
  }));
  const y = Float64Array.from(x, (v) => {
    let a = 0.02 + (rand() - 0.5) * 4e-4;
    for (const b of bands) a += b.h * Math.exp(-0.5 * ((v - b.at) / b.s) ** 2);
    return a;
  });
  return { x, y };
}

/** The hand-written resampling as it stood before ml-spectra-processing took over (resample.ts history). */
function ownResample(x: Float64Array, y: Float64Array, grid: Float64Array): Float64Array {
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

function compact(v: Float64Array, mask: Uint8Array): Float64Array {
  let n = 0;
  for (const m of mask) n += m;
  const out = new Float64Array(n);
  for (let i = 0, k = 0; i < v.length; i++) if (mask[i]) out[k++] = v[i];
  return out;
}

function packageSnv(y: Float64Array, mask: Uint8Array): Float64Array {
  const used = compact(y, mask);
  const mean = xMean(used);
  const sd = xStandardDeviation(used, { mean });
  const out = new Float64Array(y.length);
  for (let i = 0; i < y.length; i++) out[i] = (y[i] - mean) / sd;
  return out;
}

function packageCentredUnit(v: Float64Array): Float64Array {
  const m = xMean(v);
  const out = new Float64Array(v.length);
  for (let i = 0; i < v.length; i++) out[i] = v[i] - m;
  const inv = 1 / xNorm(out);
  for (let i = 0; i < v.length; i++) out[i] *= inv;
  return out;
}

function packageNoise(y: Float64Array): number {
  const d = new Float64Array(y.length - 2);
  for (let i = 1; i < y.length - 1; i++) d[i - 1] = Math.abs(y[i - 1] - 2 * y[i] + y[i + 1]);
  return (1.4826 * xMedian(d, { exact: true })) / Math.sqrt(6);
}

function maxDiff(a: ArrayLike<number> | number, b: ArrayLike<number> | number): number {
  if (typeof a === 'number' || typeof b === 'number') return Math.abs(Number(a) - Number(b));
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

function median(v: number[]): number {
  const s = [...v].sort((p, q) => p - q);
  return s[s.length >> 1];
}

/** Median time per call (microseconds) of a and b, measured in alternating rounds. */
function race(a: () => unknown, b: () => unknown, callsPerRound: number, rounds = 41): [number, number] {
  for (let i = 0; i < callsPerRound * 3; i++) {
    a();
    b();
  }
  const ta: number[] = [];
  const tb: number[] = [];
  for (let r = 0; r < rounds; r++) {
    for (const [fn, out] of r % 2
      ? ([
          [b, tb],
          [a, ta],
        ] as const)
      : ([
          [a, ta],
          [b, tb],
        ] as const)) {
      const t0 = performance.now();
      for (let i = 0; i < callsPerRound; i++) fn();
      out.push(((performance.now() - t0) * 1000) / callsPerRound);
    }
  }
  return [median(ta), median(tb)];
}

export async function runProcessingBench(): Promise<{ ok: boolean }> {
  const method = defaultMidIrAtrMethod;
  const { x, y } = spectrum();
  const grid = makeGrid(method.range, method.gridStep);
  const mask = exclusionMask(grid, method);
  const resampled = ownResample(x, y, grid);
  const unit = centredUnit(resampled);
  const rows: [string, () => unknown, () => unknown, number][] = [
    [
      'equally spaced resampling (linear)    own / xyInterpolateLinear',
      () => ownResample(x, y, grid),
      () => xyInterpolateLinear({ x, y }, grid),
      200,
    ],
    [
      'SNV over the used points              own / xMean + xStandardDeviation',
      () => normalise(resampled, mask, 'snv'),
      () => packageSnv(resampled, mask),
      200,
    ],
    [
      'centred unit vector                   own / xMean + xNorm',
      () => centredUnit(resampled),
      () => packageCentredUnit(resampled),
      200,
    ],
    [
      'dot product                           own / xDotProduct',
      () => dot(unit, unit),
      () => xDotProduct(unit, unit),
      1000,
    ],
    [
      'robust noise (median of |d2|)         own / xMedian',
      () => estimateNoise(resampled),
      () => packageNoise(resampled),
      200,
    ],
  ];
  console.log('[bench processing] hand-written engine function / ml-spectra-processing, median per call');
  for (const [name, own, pkg, calls] of rows) {
    const [ta, tb] = race(own, pkg, calls);
    const diff = maxDiff(own() as Float64Array | number, pkg() as Float64Array | number);
    console.log(
      `  ${name}: ${ta.toFixed(1)} us / ${tb.toFixed(1)} us (package ${(tb / ta).toFixed(2)}x the time); largest difference ${diff.toExponential(1)}`,
    );
  }
  return { ok: true };
}

const isMain = process.argv[1] && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/').split('/').pop()!);
if (isMain) {
  runProcessingBench()
    .then(({ ok }) => process.exit(ok ? 0 : 1))
    .catch((e) => {
      console.error('[bench processing] failed:', e);
      process.exit(2);
    });
}
