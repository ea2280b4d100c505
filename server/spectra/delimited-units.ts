/**
 * Units of a delimited-text spectrum: taken from the header when it names them,
 * otherwise inferred from the values with deliberately narrow rules. Whenever a
 * unit is inferred, a warning says so, so that the reviewer sees it.
 *
 * X (header first: "cm-1", "1/cm", "wavenumber" -> cm-1; "nm" -> nm; "um", "µm",
 * "micron" -> um). Without a usable header:
 *   - all values within 0.5..30                                 -> um
 *   - maximum above 2600 and minimum at least 50               -> cm-1
 *     (mid-IR runs to 4000 cm-1, NIR to 12500 cm-1; NIR/Vis-NIR data in nm end
 *      at or below about 2600 nm)
 *   - all values within 350..2600 on a round, even step
 *     (0.1, 0.2, 0.25, 0.5, 1, 2, 5 or 10)                    -> nm
 *     (grating instruments write wavelengths on such steps; FT instruments
 *      write wavenumbers on uneven steps such as 1.928 or 0.482 cm-1)
 *   - anything else is ambiguous                              -> UNKNOWN_X_UNITS
 *
 * Y (header first: "%T" -> percent transmittance, "T"/"transmittance" ->
 * transmittance with the scale decided from the data, "A"/"abs"/"absorbance" ->
 * absorbance, "R"/"%R"/"reflectance", "log(1/R)", "Kubelka-Munk"; "arbitrary",
 * "counts", "intensity", "signal" are refused as not interpretable). Without a
 * usable header:
 *   - median above 10, all values within -1..110 and the baseline at the top
 *     (median in the upper half of the range)                  -> percent transmittance
 *   - all values within 0..1.1 with the baseline at the top    -> refused as ambiguous
 *     (a transmittance fraction and an absorbance spectrum overlap in value)
 *   - maximum at most 10                                       -> absorbance
 *   - anything else                                            -> UNKNOWN_Y_UNITS
 */
import { SpectrumError } from './errors';
import { fmt, parseXUnitLabel, parseYUnitLabel, type XUnit, type YQuantity } from './units';

export interface UnitsDecision<T> {
  unit: T;
  /** The text the unit was read from, or a description of the inference. */
  source: string;
  inferred: boolean;
}

const ROUND_STEPS = [0.1, 0.2, 0.25, 0.5, 1, 2, 5, 10];
const NOT_INTERPRETABLE_Y = /arbitrary|\ba\.?\s?u\.?$|counts|intensity|signal|raman|single ?beam|interferogram/i;

function range(a: Float64Array): { min: number; max: number } {
  let min = Infinity;
  let max = -Infinity;
  for (let i = 0; i < a.length; i++) {
    if (a[i] < min) min = a[i];
    if (a[i] > max) max = a[i];
  }
  return { min, max };
}

function median(a: Float64Array): number {
  const s = Float64Array.from(a).sort();
  const m = s.length >> 1;
  return s.length % 2 ? s[m] : (s[m - 1] + s[m]) / 2;
}

function hasRoundStep(x: Float64Array): boolean {
  if (x.length < 2) return false;
  const step = Math.abs(x[1] - x[0]);
  const round = ROUND_STEPS.find((s) => Math.abs(step - s) < 1e-6);
  if (round === undefined) return false;
  for (let i = 1; i < x.length; i++) if (Math.abs(Math.abs(x[i] - x[i - 1]) - round) > 1e-6) return false;
  return true;
}

/** Decides the x unit of a delimited spectrum (header label first, then values). */
export function decideXUnit(label: string | undefined, x: Float64Array, fallback?: XUnit): UnitsDecision<XUnit> {
  if (label) {
    const u = parseXUnitLabel(label);
    if (u) return { unit: u, source: label, inferred: false };
  }
  if (fallback) return { unit: fallback, source: 'stated at upload', inferred: false };
  const { min, max } = range(x);
  const span = `${fmt(min)}-${fmt(max)}`;
  if (min >= 0.5 && max <= 30) return { unit: 'um', source: `inferred from the x range ${span}`, inferred: true };
  if (max > 2600 && min >= 50) return { unit: 'cm-1', source: `inferred from the x range ${span}`, inferred: true };
  if (min >= 350 && max <= 2600 && hasRoundStep(x)) {
    return { unit: 'nm', source: `inferred from the x range ${span} and its even step`, inferred: true };
  }
  throw new SpectrumError(
    'UNKNOWN_X_UNITS',
    `The file does not say whether x is in cm-1, nm or um, and its values (${span}) could be any of them. ` +
      'Export the spectrum with a header line that names the units, for example "cm-1,A" or "nm,A", and upload again.',
    { min, max, label },
  );
}

/** Decides the y quantity of a delimited spectrum (header label first, then values). */
export function decideYQuantity(
  label: string | undefined,
  y: Float64Array,
  fallback?: YQuantity,
): UnitsDecision<YQuantity> {
  if (label) {
    const q = parseYUnitLabel(label);
    if (q) return { unit: q, source: label, inferred: false };
    if (NOT_INTERPRETABLE_Y.test(label.trim())) {
      throw new SpectrumError(
        'UNKNOWN_Y_UNITS',
        `The y column is labelled "${label}", which is not absorbance, transmittance or reflectance. ` +
          'Export the spectrum as absorbance or transmittance and upload again.',
        { label },
      );
    }
  }
  if (fallback) return { unit: fallback, source: 'stated at upload', inferred: false };
  const { min, max } = range(y);
  const med = median(y);
  const baselineOnTop = med - min > 0.5 * (max - min);
  if (med > 10 && min >= -1 && max <= 110 && baselineOnTop) {
    return { unit: 'transmittance-percent', source: `inferred from the y values (median ${fmt(med)})`, inferred: true };
  }
  if (min >= 0 && max <= 1.1 && baselineOnTop) {
    throw new SpectrumError(
      'UNKNOWN_Y_UNITS',
      'The file does not say whether y is absorbance or transmittance, and its values (0 to 1, highest at the baseline) could be either. ' +
        'Export the spectrum with a header line that names the units, for example "cm-1,A" or "cm-1,T", and upload again.',
      { min, max, median: med },
    );
  }
  if (max <= 10)
    return { unit: 'absorbance', source: `inferred from the y values (${fmt(min)} to ${fmt(max)})`, inferred: true };
  throw new SpectrumError(
    'UNKNOWN_Y_UNITS',
    `The file does not say what y is, and its values (${fmt(min)} to ${fmt(max)}) are neither absorbance nor percent transmittance. ` +
      'Export the spectrum as absorbance or transmittance with a header line naming the units, and upload again.',
    { min, max, median: med, label },
  );
}
