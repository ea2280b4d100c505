/**
 * Specificity challenge (ICH Q2(R2): an identity test must tell the material
 * apart from closely related materials): every reference of the library is
 * scored, with the full per-reference criteria and the set distance, against the
 * references of every OTHER material, as if it were a sample claimed to be that
 * material. A pair of materials is "not discriminated" when any spectrum of one
 * would pass as the other. Margins say how close the nearest other material comes
 * to the correlation limit, next to how low true matches go (set the limit
 * between the two, with margin; ../shared/domain-facts.md section 2).
 * Cost grows with the square of the library size: meant for a material's
 * reference set and its look-alikes, not for a whole 10,000-entry library.
 *
 * Criteria on the whole reference set (Mahalanobis distance, residual) count only where
 * the material's model can be built (reference-model.ts). Where it cannot, the pair is
 * judged on the per-reference criteria alone, as if the set criteria passed: a material
 * is never called discriminated by a criterion that could not be evaluated. The material
 * summary says why the model is missing.
 */
import type { Library } from './library';
import type { IdentityMethod } from './method';
import { mahalanobisDistance } from './nir';
import { buildReferenceModel, type ReferenceModel, usesReferenceModel } from './reference-model';
import { residualQ } from './residual';
import { type PreparedReference, scoreReference } from './score';
import { ENGINE_VERSION } from './version';

export interface SpecificityPair {
  /** The material claimed (its references form the set). */
  materialId: string;
  /** The other material, whose spectra are scored as if they were materialId. */
  challengerMaterialId: string;
  maxCorrelation: number;
  maxDerivativeCorrelation: number | null;
  /** Smallest Mahalanobis distance of a challenger to the set, when the method uses it. */
  minDistance: number | null;
  /** Smallest residual of a challenger as a fraction of the set's residual limit (above 1 fails), when the method uses it. */
  minResidualRatio: number | null;
  /** Challenger spectra that would pass as materialId. */
  passing: string[];
  discriminated: boolean;
  /** minCorrelation - maxCorrelation: above 0 the correlation alone keeps them apart. */
  correlationMargin: number;
  /** minDerivativeCorrelation - maxDerivativeCorrelation, when the method uses it. */
  derivativeMargin: number | null;
}

export interface MaterialSummary {
  materialId: string;
  references: number;
  /** Lowest correlation between two references of the material (true matches); null with one reference. */
  lowestWithinCorrelation: number | null;
  /** lowestWithinCorrelation - minCorrelation; below 0 true matches would fail. */
  withinMargin: number | null;
  nearestMaterialId: string | null;
  highestOtherCorrelation: number | null;
  /** Why the reference-set model the method asks for could not be built for this material (empty when built or not needed). */
  referenceModelProblems: string[];
}

export interface SpecificityReport {
  engineVersion: string;
  minCorrelation: number;
  pairs: SpecificityPair[];
  /** Unordered material pairs where a spectrum of either would pass as the other. */
  notDiscriminated: Array<[string, string]>;
  /** The ordered pair with the smallest correlation margin. */
  minMargin: { value: number; materialId: string; challengerMaterialId: string } | null;
  /** The ordered pair with the smallest first-derivative correlation margin (null when not used). */
  minDerivativeMargin: { value: number; materialId: string; challengerMaterialId: string } | null;
  materials: MaterialSummary[];
  allDiscriminated: boolean;
}

function corr(a: Float64Array, b: Float64Array): number {
  let s = 0;
  for (let i = 0; i < a.length; i++) s += a[i] * b[i];
  return Math.max(-1, Math.min(1, s));
}

export function specificityMatrix(library: Library, method: IdentityMethod = library.method): SpecificityReport {
  if (method !== library.method && JSON.stringify(method) !== JSON.stringify(library.method)) {
    throw new RangeError('specificityMatrix needs the method the library was built with.');
  }
  if (library.references.length !== library.size) {
    throw new RangeError(
      'specificityMatrix needs a library built with its prepared references (keepReferences: true).',
    );
  }
  const byMaterial = new Map<string, PreparedReference[]>();
  library.references.forEach((r, i) => {
    const m = library.materialIds[i];
    byMaterial.set(m, [...(byMaterial.get(m) ?? []), r]);
  });
  const materials = [...byMaterial.keys()];
  const t = method.thresholds;
  const models = new Map<string, ReferenceModel | null>();
  const modelProblems = new Map<string, string[]>();
  for (const [m, refs] of byMaterial) {
    if (!usesReferenceModel(method)) {
      models.set(m, null);
      continue;
    }
    const built = buildReferenceModel(
      refs.map((r) => r.prepared.y),
      method,
    );
    models.set(m, built.ok ? built.model : null);
    if (!built.ok) modelProblems.set(m, built.problems);
  }

  const pairs: SpecificityPair[] = [];
  for (const a of materials) {
    const set = byMaterial.get(a) ?? [];
    const model = models.get(a) ?? null;
    for (const b of materials) {
      if (a === b) continue;
      let maxR = -1;
      let maxRd: number | null = null;
      let minD: number | null = null;
      let minQ: number | null = null;
      const passing: string[] = [];
      for (const challenger of byMaterial.get(b) ?? []) {
        const scores = set.map((ref) =>
          scoreReference(challenger.prepared, challenger.unit, challenger.unitDerivative, ref, method),
        );
        for (const s of scores) {
          maxR = Math.max(maxR, s.correlation);
          if (s.derivativeCorrelation !== null) maxRd = Math.max(maxRd ?? -1, s.derivativeCorrelation);
        }
        let setOk = true;
        if (model && t.maxMahalanobis !== null) {
          const d = mahalanobisDistance(model.model, challenger.prepared.y);
          minD = minD === null ? d : Math.min(minD, d);
          setOk = d <= t.maxMahalanobis;
        }
        if (model?.residual) {
          const q = residualQ(model.model, challenger.prepared.y) / model.residual.limit;
          minQ = minQ === null ? q : Math.min(minQ, q);
          setOk &&= q <= 1;
        }
        if (setOk && scores.some((s) => s.verdict === 'pass')) passing.push(challenger.id);
      }
      pairs.push({
        materialId: a,
        challengerMaterialId: b,
        maxCorrelation: maxR,
        maxDerivativeCorrelation: maxRd,
        minDistance: minD,
        minResidualRatio: minQ,
        passing,
        discriminated: passing.length === 0,
        correlationMargin: t.minCorrelation - maxR,
        derivativeMargin:
          t.minDerivativeCorrelation !== null && maxRd !== null ? t.minDerivativeCorrelation - maxRd : null,
      });
    }
  }

  const notDiscriminated: Array<[string, string]> = [];
  for (let i = 0; i < materials.length; i++) {
    for (let j = i + 1; j < materials.length; j++) {
      const a = materials[i];
      const b = materials[j];
      const hit = pairs.some(
        (p) =>
          !p.discriminated &&
          ((p.materialId === a && p.challengerMaterialId === b) ||
            (p.materialId === b && p.challengerMaterialId === a)),
      );
      if (hit) notDiscriminated.push([a, b]);
    }
  }

  let minMargin: SpecificityReport['minMargin'] = null;
  let minDerivativeMargin: SpecificityReport['minDerivativeMargin'] = null;
  for (const p of pairs) {
    if (!minMargin || p.correlationMargin < minMargin.value) {
      minMargin = {
        value: p.correlationMargin,
        materialId: p.materialId,
        challengerMaterialId: p.challengerMaterialId,
      };
    }
    if (p.derivativeMargin !== null && (!minDerivativeMargin || p.derivativeMargin < minDerivativeMargin.value)) {
      minDerivativeMargin = {
        value: p.derivativeMargin,
        materialId: p.materialId,
        challengerMaterialId: p.challengerMaterialId,
      };
    }
  }

  const summaries: MaterialSummary[] = materials.map((m) => {
    const refs = byMaterial.get(m) ?? [];
    let low: number | null = null;
    for (let i = 0; i < refs.length; i++) {
      for (let j = i + 1; j < refs.length; j++) {
        const r = corr(refs[i].unit, refs[j].unit);
        low = low === null ? r : Math.min(low, r);
      }
    }
    let nearest: string | null = null;
    let high: number | null = null;
    for (const p of pairs) {
      if (p.materialId === m && (high === null || p.maxCorrelation > high)) {
        high = p.maxCorrelation;
        nearest = p.challengerMaterialId;
      }
    }
    return {
      materialId: m,
      references: refs.length,
      lowestWithinCorrelation: low,
      withinMargin: low === null ? null : low - t.minCorrelation,
      nearestMaterialId: nearest,
      highestOtherCorrelation: high,
      referenceModelProblems: modelProblems.get(m) ?? [],
    };
  });

  return {
    engineVersion: ENGINE_VERSION,
    minCorrelation: t.minCorrelation,
    pairs,
    notDiscriminated,
    minMargin,
    minDerivativeMargin,
    materials: summaries,
    allDiscriminated: notDiscriminated.length === 0,
  };
}
