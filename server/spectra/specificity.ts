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
 */
import type { Library } from './library';
import type { IdentityMethod } from './method';
import { buildDistanceModel, type DistanceModel, mahalanobisDistance } from './nir';
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
  const dm = method.distanceModel;
  const models = new Map<string, DistanceModel | null>();
  for (const [m, refs] of byMaterial) {
    const use = t.maxMahalanobis !== null && dm !== null && refs.length >= dm.minReferences;
    models.set(
      m,
      use && dm
        ? buildDistanceModel(
            refs.map((r) => r.prepared.y),
            dm.components,
          )
        : null,
    );
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
          const d = mahalanobisDistance(model, challenger.prepared.y);
          minD = minD === null ? d : Math.min(minD, d);
          setOk = d <= t.maxMahalanobis;
        }
        if (setOk && scores.some((s) => s.verdict === 'pass')) passing.push(challenger.id);
      }
      pairs.push({
        materialId: a,
        challengerMaterialId: b,
        maxCorrelation: maxR,
        maxDerivativeCorrelation: maxRd,
        minDistance: minD,
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
