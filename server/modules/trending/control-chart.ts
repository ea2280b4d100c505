/**
 * Control charts for individual values (docs/trending.md): the individuals (X) chart and the
 * moving-range (MR) chart of span 2, and the run rules that turn a pattern into an early-warning
 * signal. Pure functions, no I/O.
 *
 * Limits (Shewhart individuals chart, as in ASTM E2587 and the usual textbooks):
 *   centre line  = mean of the baseline points
 *   MR-bar       = mean of |x_i - x_(i-1)| over the baseline
 *   sigma        = MR-bar / d2, d2 = 1.128 for subgroups of n = 2
 *   X limits     = centre +/- 3 sigma (= centre +/- 2.66 MR-bar)
 *   MR limits    = D3 * MR-bar = 0 and D4 * MR-bar = 3.267 MR-bar
 * d2 and d3 for n = 2 have closed forms (the mean and standard deviation of the range of two
 * independent normal values in units of sigma): d2 = 2 / sqrt(pi), d3 = sqrt(2 - 4 / pi);
 * D4 = 1 + 3 d3 / d2. tests/unit/trending-control-chart.test.ts checks the tabulated constants
 * against these forms.
 *
 * The baseline is the period QA fixes or, until QA fixes one, the first 20 points. No rule
 * raises a signal while the series has fewer than MIN_POINTS points.
 */
import { mean } from 'simple-statistics';

/** Tabulated control-chart constants for subgroups of n = 2 (the moving range of span 2). */
export const D2_N2 = 1.128;
export const D3_N2 = 0.853;
export const D4_N2 = 3.267;

/** Points needed before limits are computed from the series itself and before any rule fires. */
export const MIN_POINTS = 20;

export interface Limits {
  centre: number;
  /** estimated standard deviation (MR-bar / d2) */
  sigma: number;
  mrBar: number;
  ucl: number;
  lcl: number;
  /** upper limit of the moving range (D4 MR-bar); its lower limit is 0 */
  mrUcl: number;
  /** how many points the limits were computed from */
  points: number;
}

/** Moving ranges of span 2: mr[0] is null (no predecessor), mr[i] = |x[i] - x[i-1]|. */
export function movingRanges(xs: readonly number[]): (number | null)[] {
  return xs.map((x, i) => (i === 0 ? null : Math.abs(x - xs[i - 1])));
}

/** Individuals and moving-range limits from baseline values (at least 2). */
export function limitsFrom(baseline: readonly number[]): Limits {
  if (baseline.length < 2) throw new Error('control limits need at least 2 baseline points');
  const centre = mean(baseline as number[]);
  const mrs = movingRanges(baseline).slice(1) as number[];
  const mrBar = mean(mrs);
  const sigma = mrBar / D2_N2;
  return {
    centre,
    sigma,
    mrBar,
    ucl: centre + 3 * sigma,
    lcl: centre - 3 * sigma,
    mrUcl: D4_N2 * mrBar,
    points: baseline.length,
  };
}

export type RuleKey =
  | 'beyond-3-sigma'
  | 'two-of-three-beyond-2-sigma'
  | 'four-of-five-beyond-1-sigma'
  | 'eight-one-side'
  | 'six-trending'
  | 'moving-range';

export interface RuleInfo {
  key: RuleKey;
  /** the rule in words, as QA reads it on the chart and in the signal */
  text: string;
  /** where the rule comes from; "from memory" when the text could not be checked here */
  source: string;
}

export const RULES: Record<RuleKey, RuleInfo> = {
  'beyond-3-sigma': {
    key: 'beyond-3-sigma',
    text: 'One point beyond a 3-sigma control limit',
    source:
      'Western Electric, Statistical Quality Control Handbook (1956), rule 1; Nelson, J. Quality Technology 16 (1984), test 1 (from memory)',
  },
  'two-of-three-beyond-2-sigma': {
    key: 'two-of-three-beyond-2-sigma',
    text: 'Two of three points in a row beyond 2 sigma on the same side',
    source: 'Western Electric handbook (1956), rule 2; Nelson (1984), test 5 (from memory)',
  },
  'four-of-five-beyond-1-sigma': {
    key: 'four-of-five-beyond-1-sigma',
    text: 'Four of five points in a row beyond 1 sigma on the same side',
    source: 'Western Electric handbook (1956), rule 3; Nelson (1984), test 6 (from memory)',
  },
  'eight-one-side': {
    key: 'eight-one-side',
    text: 'Eight points in a row on the same side of the centre line',
    source: 'Western Electric handbook (1956), rule 4 (from memory; Nelson 1984 test 2 uses nine)',
  },
  'six-trending': {
    key: 'six-trending',
    text: 'Six points in a row steadily rising or steadily falling',
    source: 'Nelson, J. Quality Technology 16 (1984), test 3 (from memory)',
  },
  'moving-range': {
    key: 'moving-range',
    text: 'A moving range above its upper limit (D4 times the mean moving range)',
    source: 'Shewhart moving-range chart, D4 = 3.267 for n = 2 (ASTM E2587; closed form checked in the unit test)',
  },
};

export interface RuleHit {
  rule: RuleKey;
  /** index of the point at which the pattern is complete (the signal point) */
  index: number;
  /** indices of every point that forms the pattern */
  points: number[];
}

type Side = 1 | -1 | 0;
const side = (x: number, c: number): Side => (x > c ? 1 : x < c ? -1 : 0);

/**
 * Every run-rule hit in the series against the limits, in the order of the signal points. A
 * pattern is reported at the point that completes it; a run that keeps going reports again at
 * each further point (the caller raises one open signal per rule). Returns nothing while the
 * series is shorter than MIN_POINTS.
 */
export function evaluateRules(xs: readonly number[], l: Limits): RuleHit[] {
  if (xs.length < MIN_POINTS || !(l.sigma > 0)) return [];
  const hits: RuleHit[] = [];
  const z = xs.map((x) => (x - l.centre) / l.sigma);
  const range = (a: number, b: number) => Array.from({ length: b - a + 1 }, (_, k) => a + k);
  const mrs = movingRanges(xs);
  for (let i = 0; i < xs.length; i++) {
    if (Math.abs(z[i]) > 3) hits.push({ rule: 'beyond-3-sigma', index: i, points: [i] });
    // k of m beyond a zone on the same side; the signal point itself is beyond the zone
    for (const [rule, k, m, zone] of [
      ['two-of-three-beyond-2-sigma', 2, 3, 2],
      ['four-of-five-beyond-1-sigma', 4, 5, 1],
    ] as const) {
      if (i < m - 1) continue;
      for (const s of [1, -1] as const) {
        if (s * z[i] <= zone) continue;
        const win = range(i - m + 1, i).filter((j) => s * z[j] > zone);
        if (win.length >= k) hits.push({ rule, index: i, points: win });
      }
    }
    if (i >= 7) {
      const s = side(xs[i], l.centre);
      const win = range(i - 7, i);
      if (s !== 0 && win.every((j) => side(xs[j], l.centre) === s))
        hits.push({ rule: 'eight-one-side', index: i, points: win });
    }
    if (i >= 5) {
      const win = range(i - 5, i);
      const diffs = win.slice(1).map((j) => xs[j] - xs[j - 1]);
      if (diffs.every((d) => d > 0) || diffs.every((d) => d < 0))
        hits.push({ rule: 'six-trending', index: i, points: win });
    }
    const mr = mrs[i];
    if (mr !== null && l.mrBar > 0 && mr > l.mrUcl) hits.push({ rule: 'moving-range', index: i, points: [i - 1, i] });
  }
  return hits;
}

/**
 * Limits for a series: from the baseline values when QA fixed a baseline with at least 2 points,
 * else from the first MIN_POINTS points; null while neither is available.
 */
export function chartLimits(xs: readonly number[], baseline?: readonly number[] | null): Limits | null {
  if (baseline && baseline.length >= 2) return limitsFrom(baseline);
  if (xs.length >= MIN_POINTS) return limitsFrom(xs.slice(0, MIN_POINTS));
  return null;
}
