/**
 * Units of the abscissa and ordinate, and their conversion to the engine's
 * internal form: wavenumber in cm-1 and absorbance-like y.
 *
 * Conversions (standard spectroscopic relations):
 *   wavenumber [cm-1] = 1e7 / wavelength [nm] = 1e4 / wavelength [um]
 *   absorbance A = -log10(T), T as a fraction (T% / 100)
 *   apparent absorbance of reflectance data = log10(1 / R)
 * Kubelka-Munk and log(1/R) data are kept as they are; meta.yKind says which.
 *
 * Decisions (documented here because they are judgement calls, not standards):
 * - Transmittance or reflectance slightly above 100 % is normal (baseline drift,
 *   ATR correction, a background taken on a dirtier window). Values up to 110 %
 *   are accepted unchanged, with a warning; A is then slightly negative there.
 *   Nothing is clamped: clamping would alter raw data. Above 110 % the file is
 *   refused (TRANSMITTANCE_RANGE / REFLECTANCE_RANGE). 110 % leaves room for real
 *   files: SBO.jdx in the reference data reaches 105.96 % and the fibre set 103.7 %.
 * - A transmittance or reflectance of zero or below has no logarithm; the
 *   instrument saw no light there (a saturated band). Refused with
 *   NON_POSITIVE_TRANSMITTANCE rather than inventing a value.
 * - When a file says "transmittance" without saying fraction or percent (JCAMP-DX
 *   ##YUNITS=TRANSMITTANCE is used for both), the scale is taken from the data:
 *   a maximum at or below 1.1 means a fraction, anything higher means percent.
 */
import { SpectrumError } from './errors';
import type { AbsorbanceKind } from './types';

export type XUnit = 'cm-1' | 'nm' | 'um';

export type YQuantity =
  | 'absorbance'
  | 'transmittance-fraction'
  | 'transmittance-percent'
  | 'transmittance' // scale not stated: decided from the data
  | 'reflectance-fraction'
  | 'reflectance-percent'
  | 'reflectance' // scale not stated: decided from the data
  | 'log-inverse-reflectance'
  | 'kubelka-munk';

/** Highest transmittance / reflectance accepted, as a fraction (110 %). */
export const MAX_T_FRACTION = 1.1;

/** Wavenumber window in which converted x values must lie (cm-1); see checkWavenumberWindow. */
export const WAVENUMBER_WINDOW = { min: 50, max: 26000 } as const;

const norm = (s: string) =>
  s
    .trim()
    .toLowerCase()
    .replace(/[\s_]+/g, ' ');

/** Recognises an x-unit label from a JCAMP-DX ##XUNITS value or a column header. */
export function parseXUnitLabel(label: string): XUnit | null {
  const s = norm(label).replace(/⁻¹/g, '-1').replace(/µ|μ/g, 'u');
  if (/(1\s*\/\s*cm|cm\s*\^?\s*-\s*1|cm-1|wave ?numbers?|\bkaysers?\b|reciprocal cm)/.test(s)) return 'cm-1';
  if (/(nanomet|\bnm\b)/.test(s)) return 'nm';
  if (/(micromet|microns?\b|\bum\b|\bmicrom\b)/.test(s)) return 'um';
  return null;
}

/** Recognises a y-quantity label from a JCAMP-DX ##YUNITS value or a column header. */
export function parseYUnitLabel(label: string): YQuantity | null {
  const s = norm(label);
  if (/kubelka|\bk-?m\b|f\s*\(\s*r\s*\)/.test(s)) return 'kubelka-munk';
  if (/log\s*\(?\s*1\s*\/\s*r\s*\)?|log ?1\/r|log inverse reflectance/.test(s)) return 'log-inverse-reflectance';
  const pct = /%|percent/.test(s);
  const isT = /transmi/.test(s) || /^%?\s*t\s*[([]?\s*%?\s*[)\]]?$/.test(s);
  const isR = /reflect/.test(s) || /^%?\s*r\s*[([]?\s*%?\s*[)\]]?$/.test(s);
  if (isT) return pct ? 'transmittance-percent' : 'transmittance';
  if (isR) return pct ? 'reflectance-percent' : 'reflectance';
  if (/absorb/.test(s) || /^(abs\.?|a)(\s*[([]\s*(au|a\.u\.)\s*[)\]])?$/.test(s) || s === 'au') return 'absorbance';
  return null;
}

/** Converts an abscissa array to wavenumbers (cm-1). Order is kept (nm/um reverse it). */
export function toWavenumber(x: Float64Array, unit: XUnit): Float64Array {
  if (unit === 'cm-1') return x;
  const k = unit === 'nm' ? 1e7 : 1e4;
  const out = new Float64Array(x.length);
  for (let i = 0; i < x.length; i++) out[i] = k / x[i];
  return out;
}

/** 1e7 / nm. */
export const nmToWavenumber = (nm: number) => 1e7 / nm;
/** 1e4 / um. */
export const umToWavenumber = (um: number) => 1e4 / um;
/** A = -log10(T) with T as a fraction. */
export const transmittanceToAbsorbance = (t: number) => -Math.log10(t);

const UNIT_LABEL: Record<XUnit, string> = { 'cm-1': 'wavenumbers (cm-1)', nm: 'nanometres', um: 'micrometres' };

/**
 * Refuses x values that cannot be infrared data in the stated unit, e.g. values in
 * micrometres (2.5-25) labelled cm-1, or cm-1 values labelled nm (which would put
 * the spectrum in the ultraviolet). The window 50-26000 cm-1 spans far-IR to the
 * visible edge of Vis-NIR instruments (385 nm).
 */
export function checkWavenumberWindow(wn: Float64Array, unit: XUnit, rawMin: number, rawMax: number): void {
  let lo = Infinity;
  let hi = -Infinity;
  for (let i = 0; i < wn.length; i++) {
    if (wn[i] < lo) lo = wn[i];
    if (wn[i] > hi) hi = wn[i];
  }
  if (!(lo >= WAVENUMBER_WINDOW.min && hi <= WAVENUMBER_WINDOW.max)) {
    throw new SpectrumError(
      'X_UNITS_MISMATCH',
      `The x values run from ${fmt(rawMin)} to ${fmt(rawMax)}, which is not an infrared range in ${UNIT_LABEL[unit]}. ` +
        'The file probably states the wrong x units; export the spectrum again with the correct units.',
      { unit, rawMin, rawMax, wavenumberMin: lo, wavenumberMax: hi, window: WAVENUMBER_WINDOW },
    );
  }
}

export interface ConvertedY {
  y: Float64Array;
  yKind: AbsorbanceKind;
  /** The quantity after resolving fraction / percent. */
  quantity: YQuantity;
}

/** Converts y to an absorbance-like quantity, refusing values that have no logarithm. */
export function toAbsorbanceLike(y: Float64Array, quantity: YQuantity, warnings: string[]): ConvertedY {
  switch (quantity) {
    case 'absorbance':
      return { y, yKind: 'absorbance', quantity };
    case 'log-inverse-reflectance':
      return { y, yKind: 'log-inverse-reflectance', quantity };
    case 'kubelka-munk':
      return { y, yKind: 'kubelka-munk', quantity };
    case 'transmittance':
      return toAbsorbanceLike(
        y,
        maxOf(y) <= MAX_T_FRACTION ? 'transmittance-fraction' : 'transmittance-percent',
        warnings,
      );
    case 'reflectance':
      return toAbsorbanceLike(y, maxOf(y) <= MAX_T_FRACTION ? 'reflectance-fraction' : 'reflectance-percent', warnings);
    case 'transmittance-fraction':
    case 'transmittance-percent':
    case 'reflectance-fraction':
    case 'reflectance-percent': {
      const isT = quantity.startsWith('transmittance');
      const scale = quantity.endsWith('percent') ? 0.01 : 1;
      const out = new Float64Array(y.length);
      let max = -Infinity;
      let firstBad = -1;
      for (let i = 0; i < y.length; i++) {
        const f = y[i] * scale;
        if (f > max) max = f;
        if (!(f > 0) && firstBad < 0) firstBad = i;
        out[i] = 0 - Math.log10(f); // "0 -" avoids -0 at T = 100 %
      }
      const name = isT ? 'transmittance' : 'reflectance';
      if (firstBad >= 0) {
        throw new SpectrumError(
          'NON_POSITIVE_TRANSMITTANCE',
          `The ${name} is zero or negative at some points (first at point ${firstBad + 1}: ${fmt(y[firstBad])}), so no absorbance can be computed there: ` +
            'the band is saturated. Use a thinner sample or less pressure on the crystal and measure again.',
          { index: firstBad, value: y[firstBad], quantity },
        );
      }
      if (max > MAX_T_FRACTION) {
        throw new SpectrumError(
          isT ? 'TRANSMITTANCE_RANGE' : 'REFLECTANCE_RANGE',
          `The ${name} reaches ${fmt(max * 100)} %, but it cannot sensibly exceed 100 % (up to ${fmt(MAX_T_FRACTION * 100)} % is tolerated). ` +
            'Check the background measurement and the y units of the export, then measure again.',
          { maxPercent: max * 100, limitPercent: MAX_T_FRACTION * 100, quantity },
        );
      }
      if (max > 1)
        warnings.push(
          `The ${name} rises to ${fmt(max * 100)} % (above 100 %, within the tolerated ${fmt(MAX_T_FRACTION * 100)} %); values kept unchanged.`,
        );
      return { y: out, yKind: isT ? 'absorbance' : 'log-inverse-reflectance', quantity };
    }
  }
}

function maxOf(a: Float64Array): number {
  let m = -Infinity;
  for (let i = 0; i < a.length; i++) if (a[i] > m) m = a[i];
  return m;
}

/** Short human-readable number for messages. */
export function fmt(v: number): string {
  if (!Number.isFinite(v)) return String(v);
  const a = Math.abs(v);
  if (a !== 0 && (a < 1e-3 || a >= 1e6)) return v.toExponential(3);
  return String(Number(v.toPrecision(6)));
}
