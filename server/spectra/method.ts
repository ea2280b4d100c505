/**
 * Identity method: every parameter that turns a measured spectrum into a verdict.
 * A method is QA-owned, versioned configuration (stored with its version by the
 * server); the engine only reads it. `validateMethod` lists every problem in plain
 * words without any schema library, so the server can wrap it with zod and the
 * engine can refuse a broken method on its own.
 */

export type Technique = 'mid-ir-atr' | 'mid-ir-transmission' | 'nir';

/** A wavenumber interval in cm-1 with from < to. */
export interface WavenumberRange {
  from: number;
  to: number;
}

/** A region left out of scoring and band picking (e.g. atmospheric CO2). */
export interface ExcludedRegion extends WavenumberRange {
  label: string;
}

/** none | offset (subtract the minimum) | linear (line under the spectrum) | iterative (airPLS). */
export type BaselineMode = 'none' | 'offset' | 'linear' | 'iterative';

/** none | snv (mean 0, standard deviation 1) | vector (Euclidean norm 1). */
export type Normalisation = 'none' | 'snv' | 'vector';

/** Savitzky-Golay settings; derivative 0 = smoothing only. */
export interface SmoothingSettings {
  /** Odd number of points, at least 5. */
  windowSize: number;
  /** Polynomial order, 1..5 and below windowSize. */
  polynomial: number;
  derivative: 0 | 1 | 2;
}

/**
 * How far a sample band may sit from the reference band.
 * - absolute: a fixed number of cm-1 everywhere;
 * - relative: a percentage of the band position. Ph. Eur. 2.2.24 asks significant
 *   bands to agree "within 0.5 % of the wavenumber scale"; read as 0.5 % of the
 *   position this is +-5 cm-1 at 1000 and +-15 cm-1 at 3000 cm-1 (an interpretation
 *   that QA owns; see ../shared/domain-facts.md section 1.1).
 */
export type BandTolerance = { mode: 'absolute'; cm1: number } | { mode: 'relative'; percent: number };

export interface IdentityThresholds {
  /** Minimum Pearson correlation of the prepared spectra. */
  minCorrelation: number;
  /** Minimum correlation of Savitzky-Golay first-derivative spectra; null = not used. */
  minDerivativeCorrelation: number | null;
  /** Maximum Mahalanobis distance (RMS standard deviations over the principal components); null = not used. */
  maxMahalanobis: number | null;
  /**
   * Confidence level (0.5 to 0.9999) of the limit on the spectral residual outside the
   * reference-set model (Q, residual.ts); the limit itself is derived from the references.
   * null or absent = not used (methods stored before engine 2.0.0 have no such field).
   * Needs a distanceModel.
   */
  residualConfidence?: number | null;
}

/** Limits of the measurement-quality gate (applied before any verdict). */
export interface QualityLimits {
  /** The strongest band must rise at least this far (absorbance) above the lowest point. */
  minMaxAbsorbance: number;
  /** Any absorbance above this, or a flat top at the maximum, counts as saturated. */
  maxAbsorbance: number;
  /** Strongest band height divided by the estimated noise (RMS) must reach this. */
  minSignalToNoise: number;
}

/** Principal-component model for a distance to the whole reference set (NIR). */
export interface DistanceModelSettings {
  components: number;
  /** Below this number of references the distance is not computed (and not a criterion). */
  minReferences: number;
}

export interface IdentityMethod {
  technique: Technique;
  range: WavenumberRange;
  excludedRegions: ExcludedRegion[];
  /** Spacing of the method's wavenumber grid, cm-1. */
  gridStep: number;
  baseline: BaselineMode;
  normalisation: Normalisation;
  smoothing: SmoothingSettings;
  thresholds: IdentityThresholds;
  bandTolerance: BandTolerance;
  /**
   * The maximum of a broad band is poorly defined, so a band may also shift by this
   * fraction of its full width at half height when that is more than bandTolerance
   * (e.g. 0.25: a 260 cm-1 wide O-H band may move 65 cm-1). null = off.
   */
  widthTolerance: number | null;
  /**
   * Reference bands are peaks whose prominence reaches this fraction of the
   * strongest band (0..1). null switches band concordance off.
   */
  peakProminence: number | null;
  /** A sample band with no reference counterpart fails the method at or above this prominence (fraction of strongest band); null = not used. */
  maxExtraBandProminence: number | null;
  /**
   * Relative band intensity (Ph. Eur. 2.2.24: maxima agree in position and relative size,
   * intensity.ts): each reference band's height as a fraction of the strongest reference
   * band may differ from the matched sample band's by at most this much (0..1]. null or
   * absent = not used: methods stored before engine 2.0.0 have no such field and keep the
   * meaning they were approved with. DEFAULT_RELATIVE_INTENSITY_TOLERANCE (0.15) is the
   * suggested start: on the repeat scans of ../shared/reference-data it passes every pair
   * except an oriented silk yarn, and fails evening primrose oil against olive oil
   * (tests/unit/spectra-intensity.test.ts). Needs band picking (peakProminence).
   */
  relativeIntensityTolerance?: number | null;
  quality: QualityLimits;
  distanceModel: DistanceModelSettings | null;
  /**
   * How far another material must stay from each limit before a method version or a reference
   * is approved (the server's specificity gate; scoring never reads it). null or absent = the
   * defaults in DEFAULT_SPECIFICITY_MARGINS (docs/methods.md).
   */
  specificityMargins?: SpecificityMargins | null;
}

/**
 * Minimum distance of another material from each limit (docs/methods.md): another material
 * counts as distinct only when some criterion fails by more than its margin.
 */
export interface SpecificityMargins {
  /** Correlation coefficient (r): the other material must stay below minCorrelation minus this. */
  correlation: number;
  /** First-derivative correlation, same sense. */
  derivativeCorrelation: number;
  /** Mahalanobis distance, in RMS standard deviations above maxMahalanobis. */
  mahalanobis: number;
  /** Spectral residual, as a fraction of its limit above 1 (Q / limit). */
  residual: number;
  /** Band criteria (concordance, relative intensity, extra bands): bands beyond the limit. */
  bands: number;
}

/**
 * Default margins. 0.02 in r is the figure; the others are our equivalents, chosen so
 * a look-alike must fail clearly (no standard gives them): half a standard deviation for the
 * distance, a quarter of the residual limit, and for the band counts, which are whole numbers,
 * no extra band (a missing band is already a clear difference).
 */
export const DEFAULT_SPECIFICITY_MARGINS: SpecificityMargins = {
  correlation: 0.02,
  derivativeCorrelation: 0.02,
  mahalanobis: 0.5,
  residual: 0.25,
  bands: 0,
};

/** The margins of a method: its own, else the defaults. */
export function specificityMarginsOf(method: Pick<IdentityMethod, 'specificityMargins'>): SpecificityMargins {
  return { ...DEFAULT_SPECIFICITY_MARGINS, ...(method.specificityMargins ?? {}) };
}

/** Atmospheric CO2 stretching band, left out of mid-IR methods (common practice). */
export const CO2_REGION: ExcludedRegion = { from: 2280, to: 2400, label: 'atmospheric CO2' };

/**
 * Diamond ATR crystals absorb between about 2300 and 1900 cm-1 (two-phonon lattice
 * bands; from memory), which leaves weak artefact bands near 1975, 2025 and
 * 2170 cm-1 in the fibre spectra of ../shared/reference-data/atr-ftir-fibres.
 * Stops at 2220 cm-1 so nitrile bands (about 2240 cm-1) stay in. Remove it for
 * ZnSe or germanium crystals.
 */
export const DIAMOND_ATR_REGION: ExcludedRegion = { from: 1900, to: 2220, label: 'diamond ATR crystal absorption' };

/**
 * Default mid-IR ATR method. Range 3800-700 cm-1: about the 3800-650 cm-1 of
 * USP <197> (from memory), trimmed at the low end so that ATR data starting near
 * 700 cm-1 are covered. The thresholds were set from the real spectra in
 * ../shared/reference-data (repeat scans versus other materials; see
 * tests/unit/spectra-identity-real.test.ts) and are QA's to change.
 */
export const defaultMidIrAtrMethod: IdentityMethod = {
  technique: 'mid-ir-atr',
  range: { from: 700, to: 3800 },
  excludedRegions: [DIAMOND_ATR_REGION, CO2_REGION],
  gridStep: 1,
  baseline: 'linear',
  normalisation: 'snv',
  smoothing: { windowSize: 9, polynomial: 2, derivative: 0 },
  thresholds: { minCorrelation: 0.95, minDerivativeCorrelation: 0.9, maxMahalanobis: null },
  bandTolerance: { mode: 'relative', percent: 0.5 },
  widthTolerance: 0.25,
  peakProminence: 0.1,
  maxExtraBandProminence: 0.2,
  quality: { minMaxAbsorbance: 0.01, maxAbsorbance: 3, minSignalToNoise: 150 },
  distanceModel: null,
};

/**
 * Default NIR method (diffuse reflectance, log(1/R)): SNV and Savitzky-Golay first
 * derivative are the usual NIR pre-treatments (common practice). The sample is also
 * judged against the whole reference set: Mahalanobis distance on principal components
 * and the spectral residual outside them (Q, limit at 99 % confidence, residual.ts);
 * until the set holds minReferences references the model cannot be built and no sample
 * passes (reference-model.ts).
 */
export const defaultNirMethod: IdentityMethod = {
  technique: 'nir',
  range: { from: 4200, to: 9000 },
  excludedRegions: [],
  gridStep: 4,
  baseline: 'none',
  normalisation: 'snv',
  smoothing: { windowSize: 11, polynomial: 2, derivative: 1 },
  thresholds: { minCorrelation: 0.95, minDerivativeCorrelation: null, maxMahalanobis: 3, residualConfidence: 0.99 },
  bandTolerance: { mode: 'absolute', cm1: 20 },
  widthTolerance: 0.25,
  peakProminence: null,
  maxExtraBandProminence: null,
  quality: { minMaxAbsorbance: 0.02, maxAbsorbance: 3, minSignalToNoise: 150 },
  distanceModel: { components: 3, minReferences: 6 },
};

/** Largest grid the engine accepts (keeps memory and time bounded). */
export const MAX_GRID_POINTS = 100_000;

const TECHNIQUES: readonly Technique[] = ['mid-ir-atr', 'mid-ir-transmission', 'nir'];
const BASELINES: readonly BaselineMode[] = ['none', 'offset', 'linear', 'iterative'];
const NORMALISATIONS: readonly Normalisation[] = ['none', 'snv', 'vector'];

const isObject = (v: unknown): v is Record<string, unknown> => typeof v === 'object' && v !== null && !Array.isArray(v);
const isNum = (v: unknown): v is number => typeof v === 'number' && Number.isFinite(v);

/** Number of points of the method grid (range ends included). */
export function gridLength(method: Pick<IdentityMethod, 'range' | 'gridStep'>): number {
  return Math.floor((method.range.to - method.range.from) / method.gridStep + 1e-9) + 1;
}

/** The band tolerance in cm-1 at a given band position. */
export function toleranceAt(tolerance: BandTolerance, wavenumber: number): number {
  return tolerance.mode === 'absolute' ? tolerance.cm1 : (Math.abs(wavenumber) * tolerance.percent) / 100;
}

function checkRange(v: unknown, name: string, problems: string[]): v is WavenumberRange {
  if (!isObject(v) || !isNum(v.from) || !isNum(v.to)) {
    problems.push(`${name} needs numeric "from" and "to" in cm-1.`);
    return false;
  }
  if (v.from <= 0 || v.to <= v.from) problems.push(`${name} must satisfy 0 < from < to (got ${v.from} to ${v.to}).`);
  return true;
}

function checkFraction(v: unknown, name: string, problems: string[], nullable: boolean): void {
  if (v === null && nullable) return;
  if (!isNum(v) || v <= 0 || v > 1)
    problems.push(`${name} must be a fraction above 0 and at most 1${nullable ? ', or null' : ''}.`);
}

function checkCorrelationLimit(v: unknown, name: string, problems: string[], nullable: boolean): void {
  if (v === null && nullable) return;
  if (!isNum(v) || v <= -1 || v > 1)
    problems.push(`${name} must be a correlation above -1 and at most 1${nullable ? ', or null' : ''}.`);
}

/**
 * Every problem of a would-be method, in plain words; an empty list means valid.
 * Accepts unknown input so it can check data straight from a request or database.
 */
export function validateMethod(m: unknown): string[] {
  const problems: string[] = [];
  if (!isObject(m)) return ['The method must be an object.'];
  if (!TECHNIQUES.includes(m.technique as Technique))
    problems.push(`technique must be one of ${TECHNIQUES.join(', ')}.`);
  const rangeOk = checkRange(m.range, 'range', problems);
  if (!isNum(m.gridStep) || m.gridStep <= 0) problems.push('gridStep must be a positive number of cm-1.');
  else if (rangeOk) {
    const n = gridLength({ range: m.range as WavenumberRange, gridStep: m.gridStep });
    if (n < 50)
      problems.push(`The grid has only ${n} points; at least 50 are needed (smaller gridStep or wider range).`);
    if (n > MAX_GRID_POINTS) problems.push(`The grid has ${n} points; at most ${MAX_GRID_POINTS} are allowed.`);
  }
  if (!Array.isArray(m.excludedRegions)) problems.push('excludedRegions must be a list (possibly empty).');
  else {
    m.excludedRegions.forEach((r: unknown, i: number) => {
      const name = `excludedRegions[${i}]`;
      if (!checkRange(r, name, problems)) return;
      if (!isObject(r) || typeof r.label !== 'string' || r.label.trim() === '') problems.push(`${name} needs a label.`);
      if (rangeOk) {
        const range = m.range as WavenumberRange;
        const ex = r as WavenumberRange;
        if (ex.from <= range.from && ex.to >= range.to) problems.push(`${name} covers the whole range.`);
      }
    });
  }
  if (!BASELINES.includes(m.baseline as BaselineMode))
    problems.push(`baseline must be one of ${BASELINES.join(', ')}.`);
  if (!NORMALISATIONS.includes(m.normalisation as Normalisation)) {
    problems.push(`normalisation must be one of ${NORMALISATIONS.join(', ')}.`);
  }
  const s = m.smoothing;
  if (!isObject(s)) problems.push('smoothing needs windowSize, polynomial and derivative.');
  else {
    const { windowSize: w, polynomial: p, derivative: d } = s;
    if (!Number.isInteger(w) || (w as number) < 5 || (w as number) % 2 === 0 || (w as number) > 201) {
      problems.push('smoothing.windowSize must be an odd whole number from 5 to 201.');
    }
    if (!Number.isInteger(p) || (p as number) < 1 || (p as number) > 5)
      problems.push('smoothing.polynomial must be a whole number from 1 to 5.');
    else if (Number.isInteger(w) && (p as number) >= (w as number))
      problems.push('smoothing.polynomial must be below windowSize.');
    if (d !== 0 && d !== 1 && d !== 2) problems.push('smoothing.derivative must be 0, 1 or 2.');
    else if (Number.isInteger(p) && d > (p as number))
      problems.push('smoothing.derivative cannot exceed the polynomial order.');
  }
  const t = m.thresholds;
  if (!isObject(t)) problems.push('thresholds need minCorrelation, minDerivativeCorrelation and maxMahalanobis.');
  else {
    checkCorrelationLimit(t.minCorrelation, 'thresholds.minCorrelation', problems, false);
    checkCorrelationLimit(t.minDerivativeCorrelation ?? null, 'thresholds.minDerivativeCorrelation', problems, true);
    const mm = t.maxMahalanobis ?? null;
    if (mm !== null && (!isNum(mm) || mm <= 0))
      problems.push('thresholds.maxMahalanobis must be a positive number or null.');
    if (mm !== null && !isObject(m.distanceModel)) problems.push('thresholds.maxMahalanobis needs a distanceModel.');
    const rc = t.residualConfidence ?? null;
    if (rc !== null && (!isNum(rc) || rc < 0.5 || rc > 0.9999))
      problems.push('thresholds.residualConfidence must be a confidence level from 0.5 to 0.9999, or null.');
    if (rc !== null && !isObject(m.distanceModel))
      problems.push('thresholds.residualConfidence needs a distanceModel.');
  }
  const bt = m.bandTolerance;
  if (!isObject(bt)) problems.push('bandTolerance must be {mode: "absolute", cm1} or {mode: "relative", percent}.');
  else if (bt.mode === 'absolute') {
    if (!isNum(bt.cm1) || bt.cm1 <= 0 || bt.cm1 > 100)
      problems.push('bandTolerance.cm1 must be above 0 and at most 100 cm-1.');
  } else if (bt.mode === 'relative') {
    if (!isNum(bt.percent) || bt.percent <= 0 || bt.percent > 5)
      problems.push('bandTolerance.percent must be above 0 and at most 5 %.');
  } else problems.push('bandTolerance.mode must be "absolute" or "relative".');
  checkFraction(m.widthTolerance, 'widthTolerance', problems, true);
  checkFraction(m.peakProminence, 'peakProminence', problems, true);
  checkFraction(m.maxExtraBandProminence, 'maxExtraBandProminence', problems, true);
  if (m.peakProminence === null && m.maxExtraBandProminence !== null && m.maxExtraBandProminence !== undefined) {
    problems.push('maxExtraBandProminence needs peakProminence (band picking) to be switched on.');
  }
  const rit = m.relativeIntensityTolerance ?? null;
  checkFraction(rit, 'relativeIntensityTolerance', problems, true);
  if (rit !== null && m.peakProminence === null)
    problems.push('relativeIntensityTolerance needs peakProminence (band picking) to be switched on.');
  const q = m.quality;
  if (!isObject(q)) problems.push('quality needs minMaxAbsorbance, maxAbsorbance and minSignalToNoise.');
  else {
    if (!isNum(q.minMaxAbsorbance) || q.minMaxAbsorbance < 0)
      problems.push('quality.minMaxAbsorbance must be a number of at least 0.');
    if (!isNum(q.maxAbsorbance) || q.maxAbsorbance <= 0)
      problems.push('quality.maxAbsorbance must be a positive number.');
    else if (isNum(q.minMaxAbsorbance) && q.maxAbsorbance <= q.minMaxAbsorbance) {
      problems.push('quality.maxAbsorbance must exceed quality.minMaxAbsorbance.');
    }
    if (!isNum(q.minSignalToNoise) || q.minSignalToNoise < 0)
      problems.push('quality.minSignalToNoise must be a number of at least 0.');
  }
  const sm = m.specificityMargins ?? null;
  if (sm !== null) {
    if (!isObject(sm)) problems.push('specificityMargins must be an object or null.');
    else
      for (const k of Object.keys(DEFAULT_SPECIFICITY_MARGINS)) {
        const v = sm[k];
        const max = k === 'correlation' || k === 'derivativeCorrelation' ? 0.5 : k === 'bands' ? 10 : 5;
        if (!isNum(v) || v < 0 || v > max) problems.push(`specificityMargins.${k} must be a number from 0 to ${max}.`);
        else if (k === 'bands' && !Number.isInteger(v))
          problems.push('specificityMargins.bands must be a whole number.');
      }
  }
  const dm = m.distanceModel;
  if (dm !== null && dm !== undefined) {
    if (!isObject(dm)) problems.push('distanceModel must be {components, minReferences} or null.');
    else {
      if (!Number.isInteger(dm.components) || (dm.components as number) < 1 || (dm.components as number) > 20) {
        problems.push('distanceModel.components must be a whole number from 1 to 20.');
      }
      if (!Number.isInteger(dm.minReferences) || (dm.minReferences as number) < (dm.components as number) + 2) {
        problems.push('distanceModel.minReferences must be a whole number of at least components + 2.');
      }
    }
  }
  return problems;
}

/**
 * A stable text key of everything that changes a prepared spectrum. Prepared
 * references cached under one key stay valid as long as the key is unchanged.
 */
export function preparationKey(method: IdentityMethod): string {
  const { range, excludedRegions, gridStep, baseline, normalisation, smoothing, peakProminence } = method;
  return JSON.stringify({
    range: [range.from, range.to],
    excluded: excludedRegions.map((r) => [r.from, r.to]),
    gridStep,
    baseline,
    normalisation,
    smoothing: [smoothing.windowSize, smoothing.polynomial, smoothing.derivative],
    peakProminence,
    derivative: method.thresholds.minDerivativeCorrelation !== null,
  });
}
