/**
 * Identity decision: a sample spectrum against the approved references of a
 * grade, under one identity method.
 *
 * Order: quality gate (an invalid measurement gets no verdict), preparation,
 * then per reference: Pearson correlation of the prepared spectra, correlation of
 * first-derivative spectra (when the method asks), band concordance, relative band
 * intensity (when the method asks) and extra bands; on the whole set (when the
 * method asks): Mahalanobis distance and spectral residual (Q) against the model of
 * the reference set, or, when that model cannot be built, a failing
 * "reference-model" criterion with the reasons (reference-model.ts): a criterion is
 * never dropped silently. The verdict is pass only if every criterion passes against
 * at least one reference (and every set criterion passes). Pure and
 * deterministic: same inputs, same result.
 */
import { type Band, bandConcordance, referenceBandsFrom } from './bands';
import { centredUnit, dot } from './correlation';
import { SpectrumError } from './errors';
import { explain } from './explain';
import { compareIntensities } from './intensity';
import { type IdentityMethod, preparationKey, validateMethod } from './method';
import { mahalanobisDistance } from './nir';
import { type PreparedSpectrum, prepare } from './preprocess';
import { checkQuality } from './quality';
import { buildReferenceModel, usesReferenceModel } from './reference-model';
import { residualQ } from './residual';
import type { Criterion, DistanceResult, IdentityResult, ReferenceScore } from './result';
import type { Spectrum } from './types';
import { ENGINE_VERSION } from './version';

export interface ReferenceInput {
  id: string;
  /** How people name the reference (e.g. its code); used in explanations, defaults to id. */
  label?: string;
  /** Material (grade) of the reference; used by library search and specificity. */
  materialId?: string;
  spectrum: Spectrum;
  /** QA-approved band list; when absent, bands are picked from the reference. */
  bands?: Band[];
}

/** A reference prepared once for a method (cache it under `key`). */
export interface PreparedReference {
  id: string;
  /** How people name the reference; used in explanations. */
  label?: string;
  materialId: string | null;
  key: string;
  prepared: PreparedSpectrum;
  /** Prepared values, mean-centred and unit-normalised. */
  unit: Float64Array;
  unitDerivative: Float64Array | null;
  /** Bands every sample must show. */
  bands: Band[];
}

export function assertValidMethod(method: IdentityMethod): void {
  const problems = validateMethod(method);
  if (problems.length) {
    throw new SpectrumError('INVALID_METHOD', `The identity method is not valid: ${problems.join(' ')}`, { problems });
  }
}

/** Prepares a reference for a method; throws SpectrumError when it does not cover the method range. */
export function prepareReference(ref: ReferenceInput, method: IdentityMethod): PreparedReference {
  const prepared = prepare(ref.spectrum, method);
  const bands =
    ref.bands ?? (method.peakProminence === null ? [] : referenceBandsFrom(prepared.peaks, method.peakProminence));
  return {
    id: ref.id,
    ...(ref.label !== undefined ? { label: ref.label } : {}),
    materialId: ref.materialId ?? null,
    key: prepared.key,
    prepared,
    unit: centredUnit(prepared.y),
    unitDerivative: prepared.derivative ? centredUnit(prepared.derivative) : null,
    bands,
  };
}

function isPrepared(r: ReferenceInput | PreparedReference): r is PreparedReference {
  return 'prepared' in r;
}

function toPrepared(r: ReferenceInput | PreparedReference, method: IdentityMethod, key: string): PreparedReference {
  if (!isPrepared(r)) return prepareReference(r, method);
  if (r.key !== key) {
    throw new SpectrumError(
      'METHOD_MISMATCH',
      `Reference ${r.id} was prepared for different method settings; prepare it again for this method.`,
      { referenceId: r.id },
    );
  }
  return r;
}

function criterion(
  key: Criterion['key'],
  name: string,
  value: number,
  limit: number,
  comparison: Criterion['comparison'],
  referenceId: string | null,
): Criterion {
  const ok = Number.isFinite(value) && (comparison === '>=' ? value >= limit : value <= limit);
  return { key, name, value, limit, comparison, verdict: ok ? 'pass' : 'fail', referenceId };
}

/** Correlation of two centred unit vectors, clamped to [-1, 1] against rounding. */
function corr(a: Float64Array, b: Float64Array): number {
  return Math.max(-1, Math.min(1, dot(a, b)));
}

/** Scores a prepared sample against one prepared reference (all per-reference criteria). */
export function scoreReference(
  sample: PreparedSpectrum,
  sampleUnit: Float64Array,
  sampleUnitDerivative: Float64Array | null,
  ref: PreparedReference,
  method: IdentityMethod,
): ReferenceScore {
  const t = method.thresholds;
  const criteria: Criterion[] = [];
  const r = corr(sampleUnit, ref.unit);
  criteria.push(
    criterion('correlation', 'Correlation coefficient (r) with the reference', r, t.minCorrelation, '>=', ref.id),
  );
  let rd: number | null = null;
  if (t.minDerivativeCorrelation !== null && sampleUnitDerivative && ref.unitDerivative) {
    rd = corr(sampleUnitDerivative, ref.unitDerivative);
    criteria.push(
      criterion(
        'derivative-correlation',
        'First-derivative correlation with the reference',
        rd,
        t.minDerivativeCorrelation,
        '>=',
        ref.id,
      ),
    );
  }
  let bands: ReferenceScore['bands'] = [];
  let extraBands: ReferenceScore['extraBands'] = [];
  if (method.peakProminence !== null) {
    const c = bandConcordance(ref.bands, ref.prepared.peaks, sample.peaks, method);
    bands = c.rows;
    extraBands = c.extraBands;
    criteria.push(
      criterion('band-concordance', 'Reference bands found within tolerance', c.matched, c.rows.length, '>=', ref.id),
    );
    const rit = method.relativeIntensityTolerance ?? null;
    if (rit !== null) {
      const cmp = compareIntensities(c.rows, ref.prepared, sample, rit);
      bands = c.rows.map((row, i) => ({ ...row, intensity: cmp.intensities[i] }));
      criteria.push(
        criterion(
          'relative-intensity',
          'Reference bands with the relative intensity of the reference',
          cmp.agreeing,
          c.rows.length,
          '>=',
          ref.id,
        ),
      );
    }
    if (method.maxExtraBandProminence !== null) {
      criteria.push(
        criterion(
          'extra-bands',
          'Strong sample bands missing from the reference',
          c.extraBands.length,
          0,
          '<=',
          ref.id,
        ),
      );
    }
  }
  return {
    referenceId: ref.id,
    ...(ref.label !== undefined ? { referenceLabel: ref.label } : {}),
    materialId: ref.materialId,
    verdict: criteria.every((c) => c.verdict === 'pass') ? 'pass' : 'fail',
    correlation: r,
    derivativeCorrelation: rd,
    criteria,
    bands,
    extraBands,
  };
}

function passedCount(s: ReferenceScore): number {
  return s.criteria.filter((c) => c.verdict === 'pass').length;
}

/** The passing reference with the highest correlation, else the one passing most criteria (then highest correlation). */
function pickBest(scores: ReferenceScore[]): ReferenceScore {
  let best = scores[0];
  for (const s of scores.slice(1)) {
    const a = [s.verdict === 'pass' ? 1 : 0, passedCount(s), s.correlation];
    const b = [best.verdict === 'pass' ? 1 : 0, passedCount(best), best.correlation];
    if (a[0] > b[0] || (a[0] === b[0] && (a[1] > b[1] || (a[1] === b[1] && a[2] > b[2])))) best = s;
  }
  return best;
}

export interface ScoreOptions {
  /**
   * false: judge each reference alone and leave out the criteria on the whole reference
   * set (Mahalanobis distance, residual), for comparisons with single references such as
   * the specificity gate. The result then says so in its explanation. Default true.
   */
  referenceSetCriteria?: boolean;
}

/**
 * Scores a sample spectrum against a reference set. References may be given raw
 * (prepared here) or prepared beforehand with prepareReference for the same method.
 */
export function scoreAgainst(
  sample: Spectrum,
  references: Array<ReferenceInput | PreparedReference>,
  method: IdentityMethod,
  options: ScoreOptions = {},
): IdentityResult {
  assertValidMethod(method);
  if (references.length === 0) {
    throw new SpectrumError(
      'NO_REFERENCES',
      'There is no approved reference spectrum to compare with; QA must approve one first.',
    );
  }
  const key = preparationKey(method);
  const refs = references.map((r) => toPrepared(r, method, key));
  const quality = checkQuality(sample, method);
  if (!quality.ok) {
    const result = {
      verdict: 'invalid' as const,
      engineVersion: ENGINE_VERSION,
      quality,
      bestReferenceId: null,
      criteria: [],
      references: [],
      bands: [],
      extraBands: [],
      distance: null,
    };
    return {
      ...result,
      explanation: explain({ verdict: 'invalid', quality, best: null, setCriteria: [], referenceCount: refs.length }),
    };
  }
  const prepared = prepare(sample, method);
  const unit = centredUnit(prepared.y);
  const unitDerivative = prepared.derivative ? centredUnit(prepared.derivative) : null;
  const scores = refs.map((ref) => scoreReference(prepared, unit, unitDerivative, ref, method));

  const setCriteria: Criterion[] = [];
  let distance: DistanceResult | null = null;
  let modelProblems: string[] = [];
  const judgeSet = options.referenceSetCriteria !== false && usesReferenceModel(method);
  if (judgeSet) {
    const t = method.thresholds;
    const built = buildReferenceModel(
      refs.map((r) => r.prepared.y),
      method,
    );
    if (!built.ok) {
      modelProblems = built.problems;
      setCriteria.push(criterion('reference-model', 'Model of the reference set could be built', 0, 1, '>=', null));
    } else {
      const { model, residual } = built.model;
      const value = mahalanobisDistance(model, prepared.y);
      distance = { value, components: model.loadings.length, references: refs.length, residual: null };
      if (t.maxMahalanobis !== null) {
        setCriteria.push(
          criterion('mahalanobis', 'Mahalanobis distance to the reference set', value, t.maxMahalanobis, '<=', null),
        );
      }
      if (residual) {
        const q = residualQ(model, prepared.y);
        const ratio = q / residual.limit;
        distance.residual = { q, limit: residual.limit, ratio, confidence: residual.confidence };
        setCriteria.push(
          criterion('residual', 'Spectral residual outside the reference model (Q / limit)', ratio, 1, '<=', null),
        );
      }
    }
  }
  const best = pickBest(scores);
  const setOk = setCriteria.every((c) => c.verdict === 'pass');
  const verdict = scores.some((s) => s.verdict === 'pass') && setOk ? 'pass' : 'fail';
  return {
    verdict,
    engineVersion: ENGINE_VERSION,
    quality,
    bestReferenceId: best.referenceId,
    criteria: [...best.criteria, ...setCriteria],
    references: scores,
    bands: best.bands,
    extraBands: best.extraBands,
    distance,
    ...(modelProblems.length ? { referenceModelProblems: modelProblems } : {}),
    explanation: explain({
      verdict,
      quality,
      best,
      setCriteria,
      referenceCount: refs.length,
      modelProblems,
      setCriteriaLeftOut: options.referenceSetCriteria === false && usesReferenceModel(method),
    }),
  };
}
