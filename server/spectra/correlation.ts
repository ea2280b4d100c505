/**
 * Pearson correlation, r = sum((a - mean a)(b - mean b)) / sqrt(sum (a - mean a)^2 * sum (b - mean b)^2),
 * computed in two passes (means first) for numerical stability.
 *
 * Kept hand-written rather than ml-spectra-processing's functions:
 *  - pearson: xCorrelation uses the one-pass formula n sum(ab) - sum(a) sum(b), which cancels
 *    catastrophically on data far from zero (NaN for a spectrum on a 1e7 offset where this
 *    function gives the right r; tests/unit/spectra-correlation.test.ts);
 *  - centredUnit: xMean + xNorm give identical numbers at 1.0 to 1.3 times the time;
 *  - dot: xDotProduct gives identical numbers at 2.8 to 4.5 times the time (it is on the hot
 *    path of every score); figures from `npm run bench -- processing`.
 */

/** Pearson correlation of two equally long vectors; NaN when either is constant. */
export function pearson(a: ArrayLike<number>, b: ArrayLike<number>): number {
  const n = a.length;
  if (n !== b.length) throw new RangeError(`Vectors differ in length (${n} and ${b.length}).`);
  if (n < 2) return Number.NaN;
  let ma = 0;
  let mb = 0;
  for (let i = 0; i < n; i++) {
    ma += a[i];
    mb += b[i];
  }
  ma /= n;
  mb /= n;
  let sab = 0;
  let saa = 0;
  let sbb = 0;
  for (let i = 0; i < n; i++) {
    const da = a[i] - ma;
    const db = b[i] - mb;
    sab += da * db;
    saa += da * da;
    sbb += db * db;
  }
  if (saa === 0 || sbb === 0) return Number.NaN;
  return sab / Math.sqrt(saa * sbb);
}

/**
 * The vector mean-centred and scaled to Euclidean norm 1, so that the Pearson
 * correlation of two such vectors is their dot product. A constant vector gives
 * all zeros (its correlation with anything is then reported as 0).
 */
export function centredUnit(v: ArrayLike<number>): Float64Array {
  const n = v.length;
  let m = 0;
  for (let i = 0; i < n; i++) m += v[i];
  m /= n;
  const out = new Float64Array(n);
  let ss = 0;
  for (let i = 0; i < n; i++) {
    const d = v[i] - m;
    out[i] = d;
    ss += d * d;
  }
  if (ss === 0) return out;
  const inv = 1 / Math.sqrt(ss);
  for (let i = 0; i < n; i++) out[i] *= inv;
  return out;
}

/** Dot product (the correlation of two centred unit vectors). */
export function dot(a: ArrayLike<number>, b: ArrayLike<number>): number {
  const n = a.length;
  if (n !== b.length) throw new RangeError(`Vectors differ in length (${n} and ${b.length}).`);
  let s = 0;
  for (let i = 0; i < n; i++) s += a[i] * b[i];
  return s;
}
