/**
 * Final checks and conversion shared by every file format: raw x/y as read from
 * the file, plus the units decided for them, become a Spectrum on an ascending
 * wavenumber axis with absorbance-like y.
 *
 * Order of checks (the first failure is reported):
 *   1. at least MIN_POINTS points                      TOO_FEW_POINTS
 *   2. every x and y a finite number                   NON_FINITE
 *   3. x strictly monotonic, in either direction       DUPLICATE_X / NON_MONOTONIC_X
 *   4. x converted to cm-1 lies in the IR window       X_UNITS_MISMATCH
 *   5. y converted to absorbance-like units            TRANSMITTANCE_RANGE, ...
 * Descending data are reversed (and say so in the warnings).
 */
import { MIN_POINTS, SpectrumError } from './errors';
import type { Spectrum, SpectrumMeta } from './types';
import { checkWavenumberWindow, fmt, toAbsorbanceLike, toWavenumber, type XUnit, type YQuantity } from './units';

export interface RawSpectrum {
  x: Float64Array;
  y: Float64Array;
  xUnit: XUnit;
  yQuantity: YQuantity;
  meta: Omit<SpectrumMeta, 'points' | 'yKind'>;
}

const AXIS_NAME: Record<XUnit, string> = { 'cm-1': 'wavenumber', nm: 'wavelength', um: 'wavelength' };

export function assembleSpectrum(raw: RawSpectrum): Spectrum {
  const { x, y } = raw;
  const n = x.length;
  const warnings = [...raw.meta.warnings];

  if (n < MIN_POINTS) {
    throw new SpectrumError(
      'TOO_FEW_POINTS',
      `This file has ${n} point${n === 1 ? '' : 's'}; a spectrum needs at least ${MIN_POINTS}. Export the full spectrum from the instrument and upload again.`,
      { points: n, minimum: MIN_POINTS },
    );
  }
  for (let i = 0; i < n; i++) {
    if (!Number.isFinite(x[i]) || !Number.isFinite(y[i])) {
      const which = Number.isFinite(x[i]) ? 'y' : 'x';
      const where = which === 'y' ? `at ${AXIS_NAME[raw.xUnit]} ${fmt(x[i])}` : `(point ${i + 1})`;
      throw new SpectrumError(
        'NON_FINITE',
        `The ${which} value ${where} is missing or not a number. The export contains missing or invalid values; measure again or export the spectrum again.`,
        { index: i, axis: which },
      );
    }
  }

  const descending = x[n - 1] < x[0];
  for (let i = 1; i < n; i++) {
    const d = x[i] - x[i - 1];
    if (d === 0) {
      throw new SpectrumError(
        'DUPLICATE_X',
        `The ${AXIS_NAME[raw.xUnit]} ${fmt(x[i])} appears twice (points ${i} and ${i + 1}). A spectrum has one value per ${AXIS_NAME[raw.xUnit]}; export the spectrum again without merged or appended scans.`,
        { index: i, x: x[i] },
      );
    }
    if (d > 0 === descending) {
      throw new SpectrumError(
        'NON_MONOTONIC_X',
        `The ${AXIS_NAME[raw.xUnit]} values change direction at point ${i + 1} (${fmt(x[i - 1])} then ${fmt(x[i])}). The rows are out of order or several spectra are mixed; export a single spectrum again.`,
        { index: i, previous: x[i - 1], x: x[i] },
      );
    }
  }

  const wn = toWavenumber(x, raw.xUnit);
  checkWavenumberWindow(wn, raw.xUnit, Math.min(x[0], x[n - 1]), Math.max(x[0], x[n - 1]));
  const conv = toAbsorbanceLike(y, raw.yQuantity, warnings);

  const outX = wn === x ? Float64Array.from(x) : wn;
  const outY = conv.y === y ? Float64Array.from(y) : conv.y;
  if (outX[n - 1] < outX[0]) {
    outX.reverse();
    outY.reverse();
    if (raw.xUnit === 'cm-1')
      warnings.push('The wavenumbers were in descending order; the spectrum was put in ascending order.');
  }
  if (raw.xUnit !== 'cm-1')
    warnings.push(
      `x was converted from ${raw.xUnit === 'nm' ? 'nanometres (1e7 / nm)' : 'micrometres (1e4 / um)'} to wavenumbers.`,
    );
  if (raw.yQuantity !== 'absorbance' && conv.yKind === 'absorbance')
    warnings.push('y was converted from transmittance to absorbance (A = -log10 T).');
  if (raw.yQuantity.startsWith('reflectance')) warnings.push('y was converted from reflectance to log(1/R).');

  return {
    x: outX,
    y: outY,
    meta: { ...raw.meta, yKind: conv.yKind, points: n, warnings },
  };
}
