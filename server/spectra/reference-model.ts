/**
 * The model of a whole reference set that some methods ask for (usually NIR): principal
 * components of the prepared references (nir.ts), judged by the Mahalanobis distance in
 * the model plane (thresholds.maxMahalanobis) and by the spectral residual off it
 * (thresholds.residualConfidence, residual.ts).
 *
 * A criterion is never dropped silently: when a method asks for the model and it cannot be
 * built from the references at hand, scoring reports a failing "reference-model" criterion
 * with the reasons (score.ts), and checkReferenceModel tells method and reference approval
 * beforehand why not (too few references, a reference that does not cover the range,
 * references too alike for the components asked for, no residual variation to set a
 * limit from).
 */
import { SpectrumError } from './errors';
import { type IdentityMethod, preparationKey } from './method';
import { buildDistanceModel, type DistanceModel } from './nir';
import { prepare } from './preprocess';
import { leaveOneOutResiduals, residualLimit, type ResidualLimit } from './residual';
import type { PreparedReference, ReferenceInput } from './score';

export interface ReferenceModel {
  model: DistanceModel;
  /** The residual limit, when the method judges the residual. */
  residual: ResidualLimit | null;
  references: number;
}

export type ReferenceModelBuild = { ok: true; model: ReferenceModel } | { ok: false; problems: string[] };

/** True when the method judges a sample against the whole reference set (Mahalanobis distance or residual). */
export function usesReferenceModel(method: IdentityMethod): boolean {
  return method.thresholds.maxMahalanobis !== null || (method.thresholds.residualConfidence ?? null) !== null;
}

/** Builds the model from prepared reference vectors (PreparedSpectrum.y), or says why it cannot. */
export function buildReferenceModel(vectors: Float64Array[], method: IdentityMethod): ReferenceModelBuild {
  const dm = method.distanceModel;
  if (!dm)
    return { ok: false, problems: ['The method asks for a reference-set model but defines none (distanceModel).'] };
  const n = vectors.length;
  const k = dm.components;
  const problems: string[] = [];
  if (n < dm.minReferences) {
    problems.push(
      `The model of the reference set needs at least ${dm.minReferences} approved references under this method; there ${n === 1 ? 'is' : 'are'} ${n}.`,
    );
  }
  if (n < 3 || problems.length) return { ok: false, problems };
  const model = buildDistanceModel(vectors, k);
  if (model.loadings.length < k) {
    return {
      ok: false,
      problems: [
        `The ${n} references vary in only ${model.loadings.length} independent way(s), but the method asks for ${k} components; ` +
          'add references from other lots or measurements (copies of one spectrum add nothing).',
      ],
    };
  }
  let residual: ResidualLimit | null = null;
  const confidence = method.thresholds.residualConfidence ?? null;
  if (confidence !== null) {
    const loo = leaveOneOutResiduals(vectors, k);
    if (loo.some((q) => q === null)) {
      return {
        ok: false,
        problems: [
          `Without one of its ${n} references the set no longer spans the ${k} components the method asks for, so the residual ` +
            'limit cannot be derived; add references from other lots or measurements.',
        ],
      };
    }
    const limit = residualLimit(loo as number[], confidence);
    if (typeof limit === 'string') return { ok: false, problems: [limit] };
    residual = limit;
  }
  return { ok: true, model: { model, residual, references: n } };
}

export interface ReferenceModelCheck {
  /** The method judges against the whole reference set. */
  required: boolean;
  /** The model can be built (always true when not required). */
  buildable: boolean;
  /** Why not, in plain words (empty when buildable). */
  problems: string[];
  references: number;
  /** Components of the built model, or null. */
  components: number | null;
  /** The residual (Q) limit derived from the references, when the method judges the residual and the model was built. */
  residualLimit: number | null;
}

/**
 * Whether the reference-set model of a method can be built from these references, and why
 * not. Method approval refuses a method whose model cannot be built from its references.
 */
export function checkReferenceModel(
  references: Array<ReferenceInput | PreparedReference>,
  method: IdentityMethod,
): ReferenceModelCheck {
  const required = usesReferenceModel(method);
  const base = { required, references: references.length, components: null, residualLimit: null };
  if (!required) return { ...base, buildable: true, problems: [] };
  const key = preparationKey(method);
  const vectors: Float64Array[] = [];
  const problems: string[] = [];
  for (const r of references) {
    const name = r.label ?? r.id;
    if ('prepared' in r) {
      if (r.key !== key) problems.push(`Reference ${name} was prepared for other method settings.`);
      else vectors.push(r.prepared.y);
      continue;
    }
    try {
      vectors.push(prepare(r.spectrum, method).y);
    } catch (e) {
      if (!(e instanceof SpectrumError)) throw e;
      problems.push(`Reference ${name}: ${e.message}`);
    }
  }
  if (problems.length) return { ...base, buildable: false, problems };
  const built = buildReferenceModel(vectors, method);
  if (!built.ok) return { ...base, buildable: false, problems: built.problems };
  return {
    ...base,
    buildable: true,
    problems: [],
    components: built.model.model.loadings.length,
    residualLimit: built.model.residual?.limit ?? null,
  };
}
