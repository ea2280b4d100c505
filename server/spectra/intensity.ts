/**
 * Relative band intensity: Ph. Eur. 2.2.24 asks the absorption maxima of sample and
 * reference to agree in position AND relative size. Band concordance (bands.ts) checks
 * positions; this criterion checks sizes.
 *
 * Rule: the intensity of a band is the height of the prepared absorbance trace at its
 * maximum (baseline-corrected and smoothed, preprocess.ts). Each reference band's height
 * is divided by the height of the strongest reference band; each matched sample band's
 * height is divided by the height of the sample band matched to that same strongest
 * reference band (so an extra strong band in the sample does not rescale every band; it is
 * the extra-band criterion's job). A band agrees when the two relative intensities differ by
 * at most the method's tolerance (a fraction of the strongest band). A reference band with
 * no sample band within its positional tolerance is not compared and does not agree; when
 * the strongest reference band itself is not found, no band can be compared.
 *
 * Heights rather than prominences: the prominence of a band on the shoulder of a stronger
 * one changes with its neighbour, while the height at the maximum does not (repeat scans in
 * ../shared/reference-data agree better by height; tests/unit/spectra-intensity.test.ts).
 */
import type { BandRow } from './bands';

/** Tolerance a QA manager starts from when switching the criterion on (see method.ts). */
export const DEFAULT_RELATIVE_INTENSITY_TOLERANCE = 0.15;

/** The relative-intensity comparison of one reference band. */
export interface BandIntensity {
  /** Reference band height / strongest reference band height. */
  reference: number;
  /** Matched sample band height / height of the sample band matched to the strongest reference band; null when not compared. */
  sample: number | null;
  /** sample - reference, or null when not compared. */
  difference: number | null;
  tolerance: number;
  /** pass: within tolerance; fail: beyond it; not-compared: no sample band within the positional tolerance (counts as a failure). */
  verdict: 'pass' | 'fail' | 'not-compared';
}

/** A trace on an equally spaced ascending grid (PreparedSpectrum.grid / .trace). */
export interface Trace {
  grid: Float64Array;
  trace: Float64Array;
}

/** Linear interpolation of the trace at x (clamped to the grid). */
export function traceAt(t: Trace, x: number): number {
  const { grid, trace } = t;
  const n = grid.length;
  if (n === 0) return Number.NaN;
  if (n === 1 || x <= grid[0]) return trace[0];
  if (x >= grid[n - 1]) return trace[n - 1];
  const step = (grid[n - 1] - grid[0]) / (n - 1);
  const i = Math.min(n - 2, Math.floor((x - grid[0]) / step));
  const f = (x - grid[i]) / (grid[i + 1] - grid[i]);
  return trace[i] + f * (trace[i + 1] - trace[i]);
}

export interface IntensityComparison {
  /** One entry per row, in the order of the rows. */
  intensities: BandIntensity[];
  /** Reference bands whose relative intensity agrees. */
  agreeing: number;
  /** Position of the strongest reference band (the 1.0 of both scales), or null without bands. */
  strongestBand: number | null;
  /** False when the strongest reference band has no sample band within tolerance. */
  anchorFound: boolean;
}

/** Compares relative intensities of concordance rows (bands.ts) of a sample trace with the reference trace. */
export function compareIntensities(
  rows: BandRow[],
  reference: Trace,
  sample: Trace,
  tolerance: number,
): IntensityComparison {
  const refHeights = rows.map((r) => traceAt(reference, r.referenceBand));
  let anchor = -1;
  for (let i = 0; i < rows.length; i++) if (anchor < 0 || refHeights[i] > refHeights[anchor]) anchor = i;
  if (anchor < 0) return { intensities: [], agreeing: 0, strongestBand: null, anchorFound: false };
  const refTop = refHeights[anchor];
  const anchorRow = rows[anchor];
  const sampleTop =
    anchorRow.withinTolerance && anchorRow.sampleBand !== null ? traceAt(sample, anchorRow.sampleBand) : Number.NaN;
  const anchorFound = sampleTop > 0 && refTop > 0;
  let agreeing = 0;
  const intensities = rows.map((row, i): BandIntensity => {
    const ref = refTop > 0 ? refHeights[i] / refTop : Number.NaN;
    if (!anchorFound || !row.withinTolerance || row.sampleBand === null || !Number.isFinite(ref)) {
      return { reference: ref, sample: null, difference: null, tolerance, verdict: 'not-compared' };
    }
    const smp = traceAt(sample, row.sampleBand) / sampleTop;
    const difference = smp - ref;
    const ok = Math.abs(difference) <= tolerance;
    if (ok) agreeing++;
    return { reference: ref, sample: smp, difference, tolerance, verdict: ok ? 'pass' : 'fail' };
  });
  return { intensities, agreeing, strongestBand: anchorRow.referenceBand, anchorFound };
}
