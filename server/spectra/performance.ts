/**
 * Instrument performance checks beyond the polystyrene wavenumber scale (polystyrene.ts):
 *
 * - ATR blank: a spectrum of the clean, empty crystal ratioed against a fresh background should
 *   be flat. A band that stands out of the baseline by more than the QA-approved limit means
 *   carry-over from the last sample (or a contaminated background, which shows as a negative
 *   band), so the check looks at the absolute height above or below the baseline. The baseline
 *   is the median of the checked points, so a constant offset is not mistaken for a band.
 *   Regions the site excludes (e.g. atmospheric CO2 and water, or the diamond lattice band of a
 *   diamond crystal) are skipped. Common practice; the limit is the site's.
 * - Noise figure: the root mean square of the spectrum about a straight line fitted by least
 *   squares over a quiet region the site names, and the peak-to-peak excursion, both in the
 *   spectrum's absorbance units. The "100 % line" noise of an FT-IR spectrometer is described in
 *   ASTM E1421 (from memory: region and limits are the site's, none is built in).
 * - NIR wavelength accuracy: the band maxima of a wavelength standard (log 1/R or absorbance),
 *   located to sub-grid precision as for polystyrene, compared in nanometres with the positions
 *   and tolerances the site enters from its standard's certificate. Ph. Eur. 2.2.40 and USP <856>
 *   require the wavelength scale to be verified against a traceable standard (from memory: the
 *   usual tolerance is about +-1 nm below 1600 nm and +-1.5 nm above; the certificate and the
 *   site's procedure decide).
 * - NIR photometric noise: the reference standard measured against itself (so the spectrum is
 *   about zero absorbance); the RMS about each segment's own straight line, segment by segment
 *   across the range (USP <856> and Ph. Eur. 2.2.40 describe a noise test of this kind with
 *   100 nm segments; from memory), reported as the mean and the largest segment RMS; the mean
 *   is compared with the QA-approved limit.
 *
 * The engine's axis is the wavenumber in cm-1 (ascending); nanometre positions convert with
 * nm = 1e7 / cm-1.
 */
import { checkPolystyrene, locateMaximum, type PolystyreneOptions, type PolystyreneResult } from './polystyrene';
import type { Spectrum } from './types';
import { ENGINE_VERSION } from './version';

export interface Region {
  from: number;
  to: number;
}

export interface BlankLimits {
  /** Largest permitted height above or below the baseline, absorbance units. */
  maxAbsorbance: number;
  /** Checked range, cm-1. */
  range: Region;
  /** Sub-ranges not checked, cm-1. */
  excluded: Region[];
}

export interface BlankBand {
  /** Wavenumber of the band's extreme point, cm-1. */
  position: number;
  /** Height above (positive) or below (negative) the baseline, absorbance units. */
  height: number;
}

export interface BlankResult {
  check: 'atr-blank';
  verdict: 'pass' | 'fail';
  limit: number;
  baseline: number;
  /** The point farthest from the baseline, or null when no point was checked. */
  largest: BlankBand | null;
  /** Every run of points beyond the limit, as its extreme point, strongest first (at most 20). */
  bandsAboveLimit: BlankBand[];
  pointsChecked: number;
  engineVersion: string;
}

export interface NoiseLimits {
  /** Region of the noise figure, cm-1. */
  region: Region;
  /** Largest permitted RMS about the fitted line, absorbance units. */
  maxRms: number;
  /** Largest permitted peak-to-peak excursion about the fitted line, absorbance units (optional). */
  maxPeakToPeak?: number | null;
}

export interface NoiseResult {
  check: 'noise';
  verdict: 'pass' | 'fail';
  rms: number;
  peakToPeak: number;
  limitRms: number;
  limitPeakToPeak: number | null;
  pointsChecked: number;
  engineVersion: string;
}

export interface WavelengthBand {
  /** Certified position, nm. */
  nominal: number;
  /** Permitted deviation, nm. */
  tolerance: number;
}

export interface WavelengthLimits {
  bands: WavelengthBand[];
  /** Half-width of the window searched around each certified position, nm (default 5). */
  searchWindow?: number;
  /** The standard and certificate the positions come from (printed with the result). */
  standard: string;
}

export interface WavelengthBandResult {
  nominal: number;
  found: number | null;
  deviation: number | null;
  tolerance: number;
  ok: boolean;
}

export interface WavelengthResult {
  check: 'nir-wavelength';
  verdict: 'pass' | 'fail';
  standard: string;
  bands: WavelengthBandResult[];
  engineVersion: string;
}

export interface PhotometricNoiseLimits {
  /** Range, nm. */
  fromNm: number;
  toNm: number;
  /** Segment width, nm (default 100). */
  segmentNm?: number;
  /** Largest permitted mean segment RMS, absorbance units. */
  maxMeanRms: number;
}

export interface PhotometricNoiseResult {
  check: 'nir-photometric-noise';
  verdict: 'pass' | 'fail';
  segments: { fromNm: number; toNm: number; rms: number; points: number }[];
  meanRms: number;
  maxRms: number;
  limit: number;
  engineVersion: string;
}

const inRegion = (v: number, r: Region) => v >= Math.min(r.from, r.to) && v <= Math.max(r.from, r.to);

function median(values: number[]): number {
  if (!values.length) return 0;
  const s = [...values].sort((a, b) => a - b);
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

/** ATR blank of the clean crystal: no band beyond the limit in the checked range. */
export function checkBlank(spectrum: Spectrum, limits: BlankLimits): BlankResult {
  const { x, y } = spectrum;
  const idx: number[] = [];
  for (let i = 0; i < x.length; i++)
    if (inRegion(x[i], limits.range) && !limits.excluded.some((r) => inRegion(x[i], r))) idx.push(i);
  const baseline = median(idx.map((i) => y[i]));
  let largest: BlankBand | null = null;
  const runs: BlankBand[] = [];
  let current: BlankBand | null = null;
  let prev = -2;
  for (const i of idx) {
    const h = y[i] - baseline;
    if (!largest || Math.abs(h) > Math.abs(largest.height)) largest = { position: x[i], height: h };
    const beyond = Math.abs(h) > limits.maxAbsorbance;
    // A run ends at a gap (an excluded region) or where the height falls back within the limit.
    if (!beyond || i !== prev + 1) {
      if (current) runs.push(current);
      current = null;
    }
    if (beyond && (!current || Math.abs(h) > Math.abs(current.height))) current = { position: x[i], height: h };
    prev = i;
  }
  if (current) runs.push(current);
  runs.sort((a, b) => Math.abs(b.height) - Math.abs(a.height));
  return {
    check: 'atr-blank',
    verdict: idx.length > 0 && runs.length === 0 ? 'pass' : 'fail',
    limit: limits.maxAbsorbance,
    baseline,
    largest,
    bandsAboveLimit: runs.slice(0, 20),
    pointsChecked: idx.length,
    engineVersion: ENGINE_VERSION,
  };
}

/** Residuals of (xs, ys) about their least-squares straight line. */
export function detrend(xs: number[], ys: number[]): number[] {
  const n = xs.length;
  if (n < 2) return ys.map(() => 0);
  const mx = xs.reduce((a, b) => a + b, 0) / n;
  const my = ys.reduce((a, b) => a + b, 0) / n;
  let sxy = 0;
  let sxx = 0;
  for (let i = 0; i < n; i++) {
    sxy += (xs[i] - mx) * (ys[i] - my);
    sxx += (xs[i] - mx) ** 2;
  }
  const slope = sxx > 0 ? sxy / sxx : 0;
  return ys.map((v, i) => v - (my + slope * (xs[i] - mx)));
}

const rmsOf = (r: number[]) => (r.length ? Math.sqrt(r.reduce((a, v) => a + v * v, 0) / r.length) : 0);

/** Noise figure: RMS and peak-to-peak about the least-squares line over the region. */
export function measureNoise(spectrum: Spectrum, limits: NoiseLimits): NoiseResult {
  const xs: number[] = [];
  const ys: number[] = [];
  for (let i = 0; i < spectrum.x.length; i++)
    if (inRegion(spectrum.x[i], limits.region)) {
      xs.push(spectrum.x[i]);
      ys.push(spectrum.y[i]);
    }
  const r = detrend(xs, ys);
  const rms = rmsOf(r);
  const peakToPeak = r.length ? Math.max(...r) - Math.min(...r) : 0;
  const maxPp = limits.maxPeakToPeak ?? null;
  // Fewer than 10 points is no noise figure at all (a region outside the spectrum, a typo).
  const ok = xs.length >= 10 && rms <= limits.maxRms && (maxPp === null || peakToPeak <= maxPp);
  return {
    check: 'noise',
    verdict: ok ? 'pass' : 'fail',
    rms,
    peakToPeak,
    limitRms: limits.maxRms,
    limitPeakToPeak: maxPp,
    pointsChecked: xs.length,
    engineVersion: ENGINE_VERSION,
  };
}

/** NIR wavelength accuracy: band maxima against the certified positions, in nm. */
export function checkWavelengthAccuracy(spectrum: Spectrum, limits: WavelengthLimits): WavelengthResult {
  const w = limits.searchWindow ?? 5;
  const bands = limits.bands.map((b): WavelengthBandResult => {
    const centre = 1e7 / b.nominal;
    // The window in cm-1 that covers nominal +- w nm (wider on the short-wavelength side).
    const half = (1e7 / (b.nominal - w) - 1e7 / (b.nominal + w)) / 2;
    const peak = locateMaximum(spectrum, centre, half);
    if (!peak) return { nominal: b.nominal, found: null, deviation: null, tolerance: b.tolerance, ok: false };
    const found = 1e7 / peak.x;
    const deviation = found - b.nominal;
    const ok = Math.abs(deviation) <= b.tolerance + 1e-9 && Math.abs(deviation) <= w;
    return { nominal: b.nominal, found, deviation, tolerance: b.tolerance, ok };
  });
  return {
    check: 'nir-wavelength',
    verdict: bands.length > 0 && bands.every((b) => b.ok) ? 'pass' : 'fail',
    standard: limits.standard,
    bands,
    engineVersion: ENGINE_VERSION,
  };
}

/** NIR photometric noise: mean RMS of the segments across the range (each about its own line). */
export function measurePhotometricNoise(spectrum: Spectrum, limits: PhotometricNoiseLimits): PhotometricNoiseResult {
  const seg = limits.segmentNm ?? 100;
  const segments: PhotometricNoiseResult['segments'] = [];
  for (let start = limits.fromNm; start < limits.toNm - 1e-9; start += seg) {
    const end = Math.min(start + seg, limits.toNm);
    const xs: number[] = [];
    const ys: number[] = [];
    for (let i = 0; i < spectrum.x.length; i++) {
      const nm = 1e7 / spectrum.x[i];
      if (nm >= start && nm < end) {
        xs.push(nm);
        ys.push(spectrum.y[i]);
      }
    }
    segments.push({ fromNm: start, toNm: end, rms: rmsOf(detrend(xs, ys)), points: xs.length });
  }
  const usable = segments.filter((s) => s.points >= 10);
  const meanRms = usable.length ? usable.reduce((a, s) => a + s.rms, 0) / usable.length : 0;
  const maxRms = usable.length ? Math.max(...usable.map((s) => s.rms)) : 0;
  // Every segment must hold data: a spectrum that does not cover the range is no noise test.
  const ok = segments.length > 0 && usable.length === segments.length && meanRms <= limits.maxMeanRms;
  return {
    check: 'nir-photometric-noise',
    verdict: ok ? 'pass' : 'fail',
    segments,
    meanRms,
    maxRms,
    limit: limits.maxMeanRms,
    engineVersion: ENGINE_VERSION,
  };
}

/** One performance check as the compute pool runs it. */
export type PerformanceCheck =
  | { type: 'polystyrene'; options: PolystyreneOptions }
  | { type: 'atr-blank'; limits: BlankLimits }
  | { type: 'noise'; limits: NoiseLimits }
  | { type: 'nir-wavelength'; limits: WavelengthLimits }
  | { type: 'nir-photometric-noise'; limits: PhotometricNoiseLimits };

export type PerformanceResult =
  PolystyreneResult | BlankResult | NoiseResult | WavelengthResult | PhotometricNoiseResult;

/** Runs the check of its type on a spectrum. */
export function runPerformanceCheck(spectrum: Spectrum, check: PerformanceCheck): PerformanceResult {
  switch (check.type) {
    case 'polystyrene':
      return checkPolystyrene(spectrum, check.options);
    case 'atr-blank':
      return checkBlank(spectrum, check.limits);
    case 'noise':
      return measureNoise(spectrum, check.limits);
    case 'nir-wavelength':
      return checkWavelengthAccuracy(spectrum, check.limits);
    case 'nir-photometric-noise':
      return measurePhotometricNoise(spectrum, check.limits);
  }
}
