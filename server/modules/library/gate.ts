/**
 * The specificity gate of a method version (docs/methods.md): before QA signs the approval of a
 * version, the version's reference set is checked against every other active material whose
 * approved method has the same technique, in both directions:
 *  - "other as sample": each approved reference of the other material scored against this
 *    material's reference set under the version being approved (would a drum of the other
 *    material pass this test?);
 *  - "this as sample": each reference of this material scored against the other material's
 *    approved set under the other's approved method (would a drum of this material pass the
 *    other's test?).
 * Each pair is classified (classifyResult): "would pass", "within margin" (it passes once every
 * limit is loosened by its margin), "not compared" (the pair could not be scored: range not
 * covered, invalid spectrum, reference-set model not buildable) or "distinct". Anything but
 * "distinct" refuses approval; "not compared" is never "distinct".
 */
import type { Knex } from 'knex';
import { canonicalJson, sha256Hex } from '../../lib/canonical';
import type { MaterialRow } from '../../lib/db-tables';
import {
  type Criterion,
  type IdentityMethod,
  type IdentityResult,
  prepareReference,
  type PreparedReference,
  scoreAgainst,
  type SpecificityMargins,
  specificityMarginsOf,
  type Spectrum,
  SpectrumError,
} from '../../spectra';
import { getApprovedReferenceSet } from './approved-set';
import type { GateState, MethodGateReport, MethodGateRow } from './contract';
import { round, toEngineBands } from './engine';
import type { StoredBand } from './contract';

/** Whether one criterion still passes once its limit is loosened by the margin. */
function loosenedOk(c: Criterion, m: SpecificityMargins): boolean {
  if (!Number.isFinite(c.value)) return false;
  switch (c.key) {
    case 'correlation':
      return c.value >= c.limit - m.correlation;
    case 'derivative-correlation':
      return c.value >= c.limit - m.derivativeCorrelation;
    case 'band-concordance':
    case 'relative-intensity':
      return c.value >= c.limit - m.bands;
    case 'extra-bands':
      return c.value <= c.limit + m.bands;
    case 'mahalanobis':
      return c.value <= c.limit + m.mahalanobis;
    case 'residual':
      return c.value <= c.limit + m.residual;
    default:
      return false;
  }
}

/** The state of a scored pair: anything but "distinct" blocks approval. */
export function classifyResult(
  r: IdentityResult,
  margins: SpecificityMargins,
): { state: GateState; note: string | null } {
  if (r.verdict === 'invalid') {
    const p = r.quality.problems[0];
    return {
      state: 'not-compared',
      note: `the quality check refused the spectrum${p ? ` (${p.message})` : ''}, so no verdict exists`,
    };
  }
  if (r.referenceModelProblems?.length)
    return { state: 'not-compared', note: `the reference-set model cannot be built: ${r.referenceModelProblems[0]}` };
  if (r.verdict === 'pass') return { state: 'would-pass', note: null };
  const setCriteria = r.criteria.filter((c) => c.referenceId === null);
  const setOk = setCriteria.every((c) => loosenedOk(c, margins));
  const refOk = r.references.some((s) => s.criteria.every((c) => loosenedOk(c, margins)));
  if (setOk && refOk) return { state: 'within-margin', note: null };
  return { state: 'distinct', note: null };
}

const RANK: Record<GateState, number> = { distinct: 0, 'within-margin': 2, 'would-pass': 3, 'not-compared': 1 };

/** The worse of two states (would pass > within margin > not compared > distinct). */
export function worse(a: GateState, b: GateState): GateState {
  return RANK[a] >= RANK[b] ? a : b;
}

export interface OwnReference {
  id: number;
  code: string;
  spectrum: Spectrum;
  bands: StoredBand[];
}

function best(r: IdentityResult) {
  return r.references.find((x) => x.referenceId === r.bestReferenceId) ?? r.references[0];
}

function scoreRow(
  base: Omit<MethodGateRow, 'state' | 'correlation' | 'correlationLimit' | 'note'>,
  run: () => IdentityResult,
  params: IdentityMethod,
): MethodGateRow {
  const limit = params.thresholds.minCorrelation;
  try {
    const r = run();
    const { state, note } = classifyResult(r, specificityMarginsOf(params));
    const b = r.verdict === 'invalid' ? null : best(r);
    return { ...base, state, note, correlation: b ? round(b.correlation, 4) : null, correlationLimit: limit };
  } catch (e) {
    if (!(e instanceof SpectrumError)) throw e;
    return { ...base, state: 'not-compared', note: e.message, correlation: null, correlationLimit: limit };
  }
}

/**
 * The gate of a method version over its reference set (the approved references of the material,
 * or for a first version the draft references approved with it).
 */
export async function methodGate(
  db: Knex,
  method: { id: number; version: number; materialId: number; technique: string; params: IdentityMethod },
  own: OwnReference[],
): Promise<MethodGateReport> {
  const params = method.params;
  const ownPrepared: PreparedReference[] = own.map((r) =>
    prepareReference(
      {
        id: String(r.id),
        label: r.code,
        materialId: String(method.materialId),
        spectrum: r.spectrum,
        bands: toEngineBands(r.bands),
      },
      params,
    ),
  );
  const others = await db('material as m')
    .join('identity_method as im', function () {
      this.on('im.material_id', '=', 'm.id').andOnVal('im.status', '=', 'approved');
    })
    .where('m.active', 1)
    .andWhere('im.technique', method.technique)
    .andWhereNot('m.id', method.materialId)
    .select<Pick<MaterialRow, 'id' | 'code' | 'name'>[]>('m.id', 'm.code', 'm.name')
    .orderBy('m.code');
  const rows: MethodGateRow[] = [];
  for (const o of others) {
    const set = await getApprovedReferenceSet(o.id, db);
    if (!set || set.references.length === 0) continue;
    const label = `${o.code} version ${set.method.version}`;
    for (const ref of set.references) {
      rows.push(
        scoreRow(
          {
            otherMaterialId: o.id,
            otherMaterialCode: o.code,
            otherMaterialName: o.name,
            direction: 'other-as-sample',
            sampleReferenceCode: ref.code,
            judgedBy: `this version (${method.version})`,
          },
          () => scoreAgainst(ref.spectrum, ownPrepared, params),
          params,
        ),
      );
    }
    for (const r of own) {
      rows.push(
        scoreRow(
          {
            otherMaterialId: o.id,
            otherMaterialCode: o.code,
            otherMaterialName: o.name,
            direction: 'this-as-sample',
            sampleReferenceCode: r.code,
            judgedBy: label,
          },
          () =>
            scoreAgainst(
              r.spectrum,
              set.references.map((x) => x.prepared),
              set.method.params,
            ),
          set.method.params,
        ),
      );
    }
  }
  const offending = rows.filter((r) => r.state !== 'distinct');
  return {
    methodId: method.id,
    methodVersion: method.version,
    computedAt: new Date().toISOString(),
    margins: specificityMarginsOf(params),
    referenceCodes: own.map((r) => r.code),
    rows,
    offending,
    passed: offending.length === 0,
  };
}

const STATE_WORDS: Record<GateState, string> = {
  'would-pass': 'would pass',
  'within-margin': 'comes within the margin of a limit',
  'not-compared': 'could not be compared',
  distinct: 'is distinct',
};

/** One sentence per other material that blocks, for the refusal message. */
export function gateSentence(offending: MethodGateRow[]): string {
  const byMaterial = new Map<string, MethodGateRow>();
  for (const r of offending) {
    const prev = byMaterial.get(r.otherMaterialCode);
    if (!prev || RANK[r.state] > RANK[prev.state]) byMaterial.set(r.otherMaterialCode, r);
  }
  return [...byMaterial.values()]
    .map((r) => {
      const who =
        r.direction === 'other-as-sample'
          ? `${r.otherMaterialCode} (reference ${r.sampleReferenceCode}) as a sample under this version`
          : `this material's reference ${r.sampleReferenceCode} under ${r.judgedBy}`;
      const score =
        r.correlation !== null
          ? ` (correlation coefficient (r) ${r.correlation} against a limit of ${r.correlationLimit})`
          : '';
      const why = r.state === 'not-compared' && r.note ? `: ${r.note}` : '';
      return `${who} ${STATE_WORDS[r.state]}${score}${why}`;
    })
    .join('; ');
}

/** What an override covers: the blocking rows without the time of computation. */
export function gateHash(report: { offending: MethodGateRow[] | unknown[] }): string {
  return sha256Hex(canonicalJson(report.offending));
}
