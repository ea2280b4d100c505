/**
 * Provenance of a spectrum: is an uploaded spectrum a copy of one already stored?
 *
 * Two real acquisitions of the same sample never agree to within their own noise: every scan
 * carries fresh detector noise, so the point-wise difference of two real scans is at least about
 * sqrt(2) times the noise of one scan (plus drift of baseline and contact). A re-export of the same
 * acquisition (another header, the points in another order, other decimals or another number
 * format) differs from the original by rounding only, far below the noise. A fixed correlation
 * limit cannot tell the two apart (real replicate NIR scans reach r = 0.99995), so the rule
 * compares the difference with the noise of the two spectra themselves:
 *
 *   ratio = rms(a - b on a's points) / sqrt(noise(a)^2 + noise(b)^2)
 *
 * where noise() is the robust second-difference noise of the quality gate (quality.ts). The
 * spectrum is a copy when the ratio is below COPY_RATIO_LIMIT. The limit was set from the data:
 * docs/provenance.md lists, per technique, the smallest ratio of any two real scans and the
 * largest ratio of a re-export (tests/unit/spectra-provenance.test.ts walks every pair).
 *
 * The fingerprint is what the database indexes so that a lookup does not read every stored
 * spectrum: the point count, the x range and the mean of y in four equal parts of the x range.
 * A re-export keeps all of them to within rounding; the candidates it finds are then compared
 * in full with sameAcquisition().
 */
import { estimateNoise } from './quality';
import { resampleLinear } from './resample';
import type { Spectrum } from './types';

/** Largest difference-to-noise ratio still called a copy (docs/provenance.md: how it was chosen). */
export const COPY_RATIO_LIMIT = 0.25;

/** Smallest share of each spectrum's x range the two must have in common to be compared. */
const MIN_OVERLAP = 0.95;

export interface SpectrumFingerprint {
  points: number;
  xLow: number;
  xHigh: number;
  /** tent-weighted means of y around the middles of the four quarters of [xLow, xHigh] */
  segments: [number, number, number, number];
  /** robust second-difference noise of y */
  noise: number;
  /** max(y) - min(y) */
  yRange: number;
}

export function fingerprintOf(s: Spectrum): SpectrumFingerprint {
  const n = s.x.length;
  const xLow = s.x[0];
  const xHigh = s.x[n - 1];
  // Four tent-weighted means (centres at the middle of each quarter, half-width one quarter):
  // a point whose x moves by rounding changes its weight by as little, so a re-export with
  // rounded x keeps the same means; a hard cut would move whole points between segments.
  const sums = [0, 0, 0, 0];
  const weights = [0, 0, 0, 0];
  const width = (xHigh - xLow) / 4 || 1;
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < n; i++) {
    const u = (s.x[i] - xLow) / width - 0.5; // 0 at the centre of the first quarter
    const k0 = Math.floor(u);
    for (const k of [k0, k0 + 1]) {
      if (k < 0 || k > 3) continue;
      const w = 1 - Math.abs(u - k);
      if (w <= 0) continue;
      sums[k] += w * s.y[i];
      weights[k] += w;
    }
    if (s.y[i] < min) min = s.y[i];
    if (s.y[i] > max) max = s.y[i];
  }
  const seg = sums.map((v, k) => (weights[k] ? v / weights[k] : 0)) as SpectrumFingerprint['segments'];
  return { points: n, xLow, xHigh, segments: seg, noise: estimateNoise(s.y), yRange: max - min };
}

/**
 * Where the stored original of an uploaded spectrum can lie, if the upload is a copy of it:
 * x by two point spacings (a re-export may drop or add an end point, and round x), the point
 * count within 2 % (at least 2), and each segment mean within the upload's rounding step plus
 * its noise. A copy differs from its original by rounding (at most half a step at any point)
 * or by far less than the noise (the noise rule), so its segment means cannot differ by more;
 * real replicate scans mostly lie outside (their baselines drift) and those inside are told
 * apart by sameAcquisition().
 */
export function lookupWindow(fp: SpectrumFingerprint, yStep = 0) {
  const spacing = (fp.xHigh - fp.xLow) / Math.max(1, fp.points - 1);
  const dx = Math.max(0.1 * spacing, 0.01) + 2 * spacing;
  const dn = Math.max(2, Math.ceil(0.02 * fp.points));
  return {
    points: [fp.points - dn, fp.points + dn] as const,
    xLow: [fp.xLow - dx, fp.xLow + dx] as const,
    xHigh: [fp.xHigh - dx, fp.xHigh + dx] as const,
    segments: fp.segments.map((m) => {
      const dy = yStep + fp.noise + 1e-9 * Math.abs(m) + 1e-12;
      return [m - dy, m + dy] as const;
    }),
  };
}

export interface AcquisitionComparison {
  /** true: b is the same acquisition as a (a copy or a re-export) */
  copy: boolean;
  /** which rule found the copy ('moved': after an x offset and a straight-line map of y, alignedRatio) */
  rule: 'noise' | 'rounding' | 'moved' | null;
  /** rms of the difference divided by the combined noise; Infinity when not comparable */
  ratio: number;
  /** points of a inside the common x range */
  compared: number;
  rmsDifference: number;
  maxDifference: number;
  noiseA: number;
  noiseB: number;
  /** rounding step of y in a and in b (0 when the values are not on a step) */
  stepA: number;
  stepB: number;
  /** why the pair was not compared, when it was not */
  notComparable?: string;
  /** the best x offset (cm-1) and y scale found by alignedRatio, and the ratio left after them */
  alignment?: { ratio: number; offset: number; beta: number };
}

/**
 * The rounding step of y: the largest power of ten (1e-10 .. 1) or, failing that, the smallest
 * gap between distinct values, of which every value is a whole multiple; 0 when there is none.
 */
export function roundingStep(y: ArrayLike<number>): number {
  const n = y.length;
  if (n === 0) return 0;
  for (let k = 0; k <= 10; k++) {
    const f = 10 ** k;
    let ok = true;
    for (let i = 0; i < n && ok; i++) {
      const v = y[i] * f;
      if (Math.abs(v - Math.round(v)) > 1e-6 + 1e-12 * Math.abs(v)) ok = false;
    }
    if (ok) return 1 / f;
  }
  const sorted = Float64Array.from(y).sort();
  let gap = Infinity;
  for (let i = 1; i < n; i++) {
    const d = sorted[i] - sorted[i - 1];
    if (d > 0 && d < gap) gap = d;
  }
  const range = sorted[n - 1] - sorted[0];
  if (!Number.isFinite(gap) || gap < 1e-9 * Math.max(range, 1e-300)) return 0;
  for (let i = 0; i < n; i++) {
    const m = (y[i] - sorted[0]) / gap;
    if (Math.abs(m - Math.round(m)) > 1e-3) return 0;
  }
  return gap;
}

/**
 * Compares b with a on a's points inside their common x range: point by point when both have the
 * same points (to within a hundredth of the spacing, in any order of export), else by linear
 * interpolation of b. A copy is found by either of two rules:
 * - noise: the rms difference is below COPY_RATIO_LIMIT times the combined noise;
 * - rounding: every point differs by no more than the rounding steps of the two files allow
 *   (half of each step), the steps being fine enough to keep the spectrum (at most 5 % of its
 *   y range). A coarser export than the noise is still a copy: its values are the original's,
 *   rounded. Two real scans never agree to within the rounding at every point.
 * Identical values are always a copy, whatever their noise.
 */
export function sameAcquisition(a: Spectrum, b: Spectrum): AcquisitionComparison {
  const noiseA = estimateNoise(a.y);
  const noiseB = estimateNoise(b.y);
  const stepA = roundingStep(a.y);
  const stepB = roundingStep(b.y);
  const lo = Math.max(a.x[0], b.x[0]);
  const hi = Math.min(a.x[a.x.length - 1], b.x[b.x.length - 1]);
  const spanA = a.x[a.x.length - 1] - a.x[0];
  const spanB = b.x[b.x.length - 1] - b.x[0];
  const none = (why: string): AcquisitionComparison => ({
    copy: false,
    rule: null,
    ratio: Infinity,
    compared: 0,
    rmsDifference: NaN,
    maxDifference: NaN,
    noiseA,
    noiseB,
    stepA,
    stepB,
    notComparable: why,
  });
  if (!(hi > lo) || hi - lo < MIN_OVERLAP * spanA || hi - lo < MIN_OVERLAP * spanB) return none('the x ranges differ');
  let yb: Float64Array;
  let from = 0;
  let to = a.x.length;
  if (samePoints(a.x, b.x)) {
    yb = b.y;
  } else {
    while (from < a.x.length && a.x[from] < lo) from++;
    while (to > from && a.x[to - 1] > hi) to--;
    if (to - from < 10) return none('too few common points');
    yb = resampleLinear(b.x, b.y, a.x.subarray(from, to));
  }
  const count = to - from;
  let ss = 0;
  let maxDifference = 0;
  for (let i = 0; i < count; i++) {
    const d = Math.abs(a.y[from + i] - yb[i]);
    ss += d * d;
    if (d > maxDifference) maxDifference = d;
  }
  const rmsDifference = Math.sqrt(ss / count);
  const noise = Math.hypot(noiseA, noiseB);
  const ratio = rmsDifference === 0 ? 0 : noise > 0 ? rmsDifference / noise : Infinity;
  const range = Math.min(rangeOf(a.y), rangeOf(b.y));
  const steps = stepA + stepB;
  const byRounding = steps > 0 && steps <= 0.05 * range && maxDifference <= (steps / 2) * (1 + 1e-6) + 1e-12;
  const byNoise = ratio < COPY_RATIO_LIMIT;
  // Only when neither rule found it: the same acquisition moved along x or rescaled in y by a script.
  const moved = !byNoise && !byRounding ? alignedRatio(a, b) : null;
  const byMoving = moved !== null && moved.ratio < COPY_RATIO_LIMIT;
  return {
    copy: byNoise || byRounding || byMoving,
    rule: byNoise ? 'noise' : byRounding ? 'rounding' : byMoving ? 'moved' : null,
    ratio: byMoving ? moved.ratio : ratio,
    ...(moved ? { alignment: { ratio: moved.ratio, offset: moved.offset, beta: moved.beta } } : {}),
    compared: count,
    rmsDifference,
    maxDifference,
    noiseA,
    noiseB,
    stepA,
    stepB,
  };
}

/**
 * The difference-to-noise ratio of b against a after the best small x offset (within two point
 * spacings) and the best straight-line map of y (b ~ alpha + beta * a, least squares): what is left
 * when a copy was moved along x or had its y scaled or offset by a script. Two real scans still
 * differ by their noise (ratio near 1 or more); a moved or rescaled copy by interpolation only.
 */
export function alignedRatio(a: Spectrum, b: Spectrum): { ratio: number; offset: number; beta: number } {
  const n = a.x.length;
  const spacing = Math.abs(a.x[n - 1] - a.x[0]) / Math.max(1, n - 1);
  const noiseA = estimateNoise(a.y);
  const noiseB = estimateNoise(b.y);
  const bLo = Math.min(b.x[0], b.x[b.x.length - 1]);
  const bHi = Math.max(b.x[0], b.x[b.x.length - 1]);
  // b's points in increasing x for the interpolation
  const order = b.x[0] <= b.x[b.x.length - 1];
  const bx = order ? b.x : Float64Array.from(b.x).reverse();
  const by = order ? b.y : Float64Array.from(b.y).reverse();
  // a's points in increasing x too, so one moving pointer walks b (linear interpolation, O(n))
  const aUp = a.x[0] <= a.x[n - 1];
  const ax = aUp ? a.x : Float64Array.from(a.x).reverse();
  const ay = aUp ? a.y : Float64Array.from(a.y).reverse();
  const nb = bx.length;
  const at = (offset: number) => {
    let j = 0;
    let m = 0;
    let sa = 0;
    let sb = 0;
    let saa = 0;
    let sab = 0;
    let sbb = 0;
    for (let i = 0; i < n; i++) {
      const x = ax[i] + offset;
      if (x < bLo || x > bHi) continue;
      while (j < nb - 2 && bx[j + 1] < x) j++;
      const x0 = bx[j];
      const x1 = bx[j + 1];
      const t = x1 > x0 ? (x - x0) / (x1 - x0) : 0;
      const yb = by[j] + t * (by[j + 1] - by[j]);
      const ya = ay[i];
      m++;
      sa += ya;
      sb += yb;
      saa += ya * ya;
      sab += ya * yb;
      sbb += yb * yb;
    }
    if (m < 10) return { ratio: Infinity, beta: 1 };
    const den = m * saa - sa * sa;
    const beta = den > 0 ? (m * sab - sa * sb) / den : 1;
    const alpha = (sb - beta * sa) / m;
    // residual sum of squares of yb - (alpha + beta * ya), from the sums
    const ss = Math.max(
      0,
      sbb - 2 * alpha * sb - 2 * beta * sab + m * alpha * alpha + 2 * alpha * beta * sa + beta * beta * saa,
    );
    const noise = Math.hypot(Math.abs(beta) * noiseA, noiseB);
    const rms = Math.sqrt(ss / m);
    return { ratio: rms === 0 ? 0 : noise > 0 ? rms / noise : Infinity, beta };
  };
  let best = { ratio: Infinity, offset: 0, beta: 1 };
  const consider = (offset: number) => {
    const r = at(offset);
    if (r.ratio < best.ratio) best = { ratio: r.ratio, offset, beta: r.beta };
  };
  for (let k = -20; k <= 20; k++) consider(k * 0.1 * spacing); // coarse, two spacings either way
  // then narrower around the best: the two neighbours and the vertex of the parabola through the three
  for (const h of [0.05, 0.01, 0.002, 0.0004, 0.00008]) {
    const step = h * spacing;
    const c = best.offset;
    const r0 = best.ratio;
    const minus = at(c - step);
    const plus = at(c + step);
    const rm = minus.ratio;
    const rp = plus.ratio;
    if (rm < best.ratio) best = { ...minus, offset: c - step };
    if (rp < best.ratio) best = { ...plus, offset: c + step };
    const curve = rm + rp - 2 * r0;
    if (Number.isFinite(curve) && curve > 0) consider(c + (step * (rm - rp)) / (2 * curve));
  }
  return best;
}

function samePoints(xa: Float64Array, xb: Float64Array): boolean {
  const n = xa.length;
  if (n !== xb.length || n < 2) return false;
  const tol = (0.01 * Math.abs(xa[n - 1] - xa[0])) / (n - 1);
  for (let i = 0; i < n; i++) if (Math.abs(xa[i] - xb[i]) > tol) return false;
  return true;
}

function rangeOf(y: Float64Array): number {
  let min = Infinity;
  let max = -Infinity;
  for (const v of y) {
    if (v < min) min = v;
    if (v > max) max = v;
  }
  return max - min;
}

/** What a file says about its own acquisition (JCAMP-DX labelled data records); null where it says nothing. */
export interface StatedAcquisition {
  /** the date and time as written (##LONGDATE=, or ##DATE= with ##TIME=) */
  whenText: string | null;
  /** read from whenText: local date-time 'YYYY-MM-DDTHH:MM:SS' (time 00:00:00 when only a date is stated) */
  whenLocal: string | null;
  /** whether whenText states a time of day (a date alone is judged by day) */
  hasTime: boolean;
  /** offset from UTC in minutes when the file states one (JCAMP-DX 5 ##LONGDATE= ... +HHMM) */
  utcOffsetMinutes: number | null;
  /** ##SPECTROMETER/DATA SYSTEM= (and ##INSTRUMENT...= private records), as written */
  instrumentText: string | null;
  /** a serial number stated in the file: a ##$...SERIAL...= record, or "S/N", "SN", "serial" in the spectrometer text */
  serial: string | null;
  /** ##SAMPLE DESCRIPTION=, ##$SAMPLE ID= and similar: the file's own sample identifier */
  sampleText: string | null;
}

const SERIAL_IN_TEXT = /\b(?:s\/n|sn|serial(?:\s*(?:no\.?|number|#))?)\s*[:#=]?\s*([A-Za-z0-9][A-Za-z0-9._/-]{2,39})/i;

function parseWhen(longDate: string | undefined, date: string | undefined, time: string | undefined) {
  const pick = (longDate ?? '').trim() || [date?.trim(), time?.trim()].filter(Boolean).join(' ');
  if (!pick) return { whenText: null, whenLocal: null, hasTime: false, utcOffsetMinutes: null };
  const m =
    /^(\d{4}|\d{2})[/.-](\d{1,2})[/.-](\d{1,2})(?:[ T,]+(\d{1,2}):(\d{2})(?::(\d{2})(?:\.\d+)?)?)?\s*(?:(?:UTC|GMT|Z)?\s*([+-])(\d{2}):?(\d{2}))?\s*$/i.exec(
      pick,
    );
  if (!m) return { whenText: pick, whenLocal: null, hasTime: false, utcOffsetMinutes: null };
  let year = Number(m[1]);
  if (m[1].length === 2) year += year < 70 ? 2000 : 1900;
  const month = Number(m[2]);
  const day = Number(m[3]);
  const hh = m[4] === undefined ? 0 : Number(m[4]);
  const mm = m[5] === undefined ? 0 : Number(m[5]);
  const ss = m[6] === undefined ? 0 : Number(m[6]);
  const probe = new Date(Date.UTC(year, month - 1, day, hh, mm, ss));
  if (
    probe.getUTCFullYear() !== year ||
    probe.getUTCMonth() !== month - 1 ||
    probe.getUTCDate() !== day ||
    hh > 23 ||
    mm > 59 ||
    ss > 59
  )
    return { whenText: pick, whenLocal: null, hasTime: false, utcOffsetMinutes: null };
  const p = (v: number, w = 2) => String(v).padStart(w, '0');
  return {
    whenText: pick,
    whenLocal: `${p(year, 4)}-${p(month)}-${p(day)}T${p(hh)}:${p(mm)}:${p(ss)}`,
    hasTime: m[4] !== undefined,
    utcOffsetMinutes: m[7] ? (m[7] === '-' ? -1 : 1) * (Number(m[8]) * 60 + Number(m[9])) : null,
  };
}

/** Reads the acquisition facts from the labels of a JCAMP-DX data block (canonical keys, jcamp-ldr.ts). */
export function statedAcquisition(labels: Record<string, string>): StatedAcquisition {
  const clean = (v: string | undefined) => {
    const t = (v ?? '').replace(/\s+/g, ' ').trim();
    return t === '' ? null : t.slice(0, 300);
  };
  const when = parseWhen(labels.LONGDATE, labels.DATE, labels.TIME);
  const instrumentText =
    clean(labels.SPECTROMETERDATASYSTEM) ?? clean(labels.SPECTROMETER) ?? clean(labels.$INSTRUMENT) ?? null;
  let serial: string | null = null;
  for (const [k, v] of Object.entries(labels))
    if (k.startsWith('$') && k.includes('SERIAL') && clean(v)) {
      serial = clean(v)!.slice(0, 80);
      break;
    }
  if (!serial && instrumentText) serial = SERIAL_IN_TEXT.exec(instrumentText)?.[1] ?? null;
  const sampleText =
    clean(labels.SAMPLEDESCRIPTION) ?? clean(labels.$SAMPLEID) ?? clean(labels.$SAMPLENAME) ?? clean(labels.SAMPLEID);
  return { ...when, instrumentText, serial, sampleText };
}
