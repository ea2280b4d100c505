/**
 * Band concordance: every reference band needs a sample band within tolerance
 * (Ph. Eur. 2.2.24: the absorption maxima of the sample match those of the
 * reference in position); the shift is reported. Strong sample bands with no
 * reference counterpart are extra bands. Each band is given its likely
 * group-frequency assignment.
 *
 * The tolerance rule (bandToleranceFor): the method's positional tolerance applies to
 * every band. Only a broad band, full width at half height of at least BROAD_BAND_WIDTH
 * (the same line that calls a band "broad" in explanations), may shift further: up to
 * widthTolerance times its width, because the maximum of a broad band is poorly defined.
 * A sharp band never passes with a shift beyond its positional tolerance. The width is
 * the reference band's; a band listed by QA without a width counts as sharp.
 */
import { BROAD_BAND_WIDTH, describeAssignment, shapeOf } from './group-frequencies';
import type { BandIntensity } from './intensity';
import { type BandTolerance, toleranceAt } from './method';
import type { Peak } from './peaks';

/** A reference band: picked automatically or listed by QA. */
export interface Band {
  /** Position, cm-1. */
  position: number;
  /** Prominence as a fraction of the strongest band, when known. */
  prominence?: number;
  /** Full width at half height, cm-1, when known. */
  width?: number;
  /** QA's own assignment text; otherwise the correlation table's. */
  assignment?: string;
}

export interface BandRow {
  referenceBand: number;
  /** Nearest sample band within the search window, or null when none. */
  sampleBand: number | null;
  /** sampleBand - referenceBand, cm-1, or null. */
  shift: number | null;
  /** Allowed |shift| for this band, cm-1. */
  tolerance: number;
  /** The method's positional tolerance at this band, cm-1 (tolerance is larger only when widened). */
  positionTolerance: number;
  /** Full width at half height of the reference band, cm-1, when known. */
  referenceWidth: number | null;
  /** True when the tolerance was widened because the reference band is broad. */
  widened: boolean;
  /** The rule that set the tolerance, in words, e.g. "0.5 % of the position" or "widened for a broad band, FWHM 262 cm-1". */
  toleranceRule: string;
  withinTolerance: boolean;
  assignment: string;
  referenceProminence: number | null;
  sampleProminence: number | null;
  /** Relative-intensity comparison (intensity.ts), present only when the method uses that criterion. */
  intensity?: BandIntensity;
}

export interface ExtraBand {
  position: number;
  prominence: number;
  width: number;
  assignment: string;
}

export interface BandConcordance {
  rows: BandRow[];
  extraBands: ExtraBand[];
  /** Reference bands with a sample band within tolerance. */
  matched: number;
}

export interface ConcordanceSettings {
  bandTolerance: BandTolerance;
  widthTolerance: number | null;
  maxExtraBandProminence: number | null;
}

/** Sample bands up to this many tolerances away are reported (as shifted) in the band table. */
export const SEARCH_FACTOR = 3;

/** How the tolerance of one band was set (see the rule at the top of this file). */
export interface BandToleranceRule {
  /** Allowed |shift|, cm-1. */
  tolerance: number;
  /** The method's positional tolerance at the band, cm-1. */
  positionTolerance: number;
  widened: boolean;
  /** The rule in words. */
  rule: string;
}

function positionRule(t: BandTolerance): string {
  return t.mode === 'absolute' ? `${t.cm1} cm-1 at every position` : `${t.percent} % of the position`;
}

/** The tolerance of a band at `position` with full width at half height `width` (cm-1), and why. */
export function bandToleranceRule(
  position: number,
  width: number | undefined,
  s: ConcordanceSettings,
): BandToleranceRule {
  const positionTolerance = toleranceAt(s.bandTolerance, position);
  const w = s.widthTolerance;
  if (width !== undefined && width >= BROAD_BAND_WIDTH && w !== null && w * width > positionTolerance) {
    return {
      tolerance: w * width,
      positionTolerance,
      widened: true,
      rule: `widened for a broad band, FWHM ${width.toFixed(0)} cm-1 (${w} x FWHM; ${positionRule(s.bandTolerance)} would allow ${positionTolerance.toFixed(1)} cm-1)`,
    };
  }
  return { tolerance: positionTolerance, positionTolerance, widened: false, rule: positionRule(s.bandTolerance) };
}

/** Allowed shift of a band at `position` with full width at half height `width` (cm-1). */
export function bandToleranceFor(position: number, width: number | undefined, s: ConcordanceSettings): number {
  return bandToleranceRule(position, width, s).tolerance;
}

/** Reference bands from picked peaks: those at least `minProminence` high. */
export function referenceBandsFrom(peaks: Peak[], minProminence: number): Band[] {
  return peaks
    .filter((p) => p.prominence >= minProminence)
    .map((p) => ({ position: p.position, prominence: p.prominence, width: p.width }));
}

/**
 * Matches reference bands to sample peaks one-to-one, nearest pairs first
 * (deterministic), and lists strong unmatched sample peaks as extra bands.
 * `referencePeaks` are all peaks detected in the reference (also weak ones), so a
 * sample band is only "extra" when the reference shows nothing there at all.
 */
export function bandConcordance(
  referenceBands: Band[],
  referencePeaks: Peak[],
  samplePeaks: Peak[],
  s: ConcordanceSettings,
): BandConcordance {
  const refs = [...referenceBands].sort((a, b) => a.position - b.position);
  const rules = refs.map((b) => bandToleranceRule(b.position, b.width, s));
  const tol = rules.map((r) => r.tolerance);
  const pairs: { r: number; p: number; d: number }[] = [];
  for (let r = 0; r < refs.length; r++) {
    for (let p = 0; p < samplePeaks.length; p++) {
      const d = Math.abs(samplePeaks[p].position - refs[r].position);
      if (d <= SEARCH_FACTOR * tol[r]) pairs.push({ r, p, d });
    }
  }
  pairs.sort((a, b) => a.d - b.d || a.r - b.r || a.p - b.p);
  const refTaken = new Int32Array(refs.length).fill(-1);
  const peakTaken = new Uint8Array(samplePeaks.length);
  for (const { r, p } of pairs) {
    if (refTaken[r] >= 0 || peakTaken[p]) continue;
    refTaken[r] = p;
    peakTaken[p] = 1;
  }
  let matched = 0;
  const rows: BandRow[] = refs.map((b, r) => {
    const peak = refTaken[r] >= 0 ? samplePeaks[refTaken[r]] : null;
    const shift = peak ? peak.position - b.position : null;
    const within = shift !== null && Math.abs(shift) <= tol[r];
    if (within) matched++;
    return {
      referenceBand: b.position,
      sampleBand: peak ? peak.position : null,
      shift,
      tolerance: tol[r],
      positionTolerance: rules[r].positionTolerance,
      referenceWidth: b.width ?? null,
      widened: rules[r].widened,
      toleranceRule: rules[r].rule,
      withinTolerance: within,
      assignment: b.assignment ?? describeAssignment(b.position, b.width !== undefined ? shapeOf(b.width) : undefined),
      referenceProminence: b.prominence ?? null,
      sampleProminence: peak ? peak.prominence : null,
    };
  });
  const extraBands: ExtraBand[] = [];
  if (s.maxExtraBandProminence !== null) {
    for (let p = 0; p < samplePeaks.length; p++) {
      const peak = samplePeaks[p];
      if (peak.prominence < s.maxExtraBandProminence) continue;
      const t = bandToleranceFor(peak.position, peak.width, s);
      const inRef = referencePeaks.some(
        (q) => Math.abs(q.position - peak.position) <= Math.max(t, bandToleranceFor(q.position, q.width, s)),
      );
      const matchedWithin = rows.some((row) => row.sampleBand === peak.position && row.withinTolerance);
      if (inRef || matchedWithin) continue;
      extraBands.push({
        position: peak.position,
        prominence: peak.prominence,
        width: peak.width,
        assignment: describeAssignment(peak.position, shapeOf(peak.width)),
      });
    }
  }
  return { rows, extraBands, matched };
}
