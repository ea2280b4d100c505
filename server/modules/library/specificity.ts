/**
 * Specificity of the library (ICH Q2(R2): an identity test must reject closely related
 * materials; adding a material means re-checking the whole library).
 *
 * The gate (before a reference is approved): under the grade's approved method, the candidate
 * reference is scored against every approved reference of every OTHER active material whose
 * approved method has the same technique, in both directions:
 *  - "other as sample": the other material's reference scored against the candidate alone -
 *    would that material pass this grade's test once the candidate is approved?
 *  - "candidate as sample": the candidate scored against the other reference (the wording of
 *    the issue) - is the candidate itself indistinguishable from the other material?
 * A pair "would pass" when either direction passes every criterion. Any such pair blocks
 * approval unless QA records a written justification.
 *
 * The matrix (library page): for every pair of materials with an approved method and approved
 * references, each reference of the column material scored as a sample against the row
 * material's approved reference set under the row material's method. The diagonal scores each
 * reference against the others of its own set (leave one out), when there are at least two.
 */
import type { Knex } from 'knex';
import { getDb } from '../../lib/db';
import {
  type IdentityMethod,
  type PreparedReference,
  prepareReference,
  scoreAgainst,
  type Spectrum,
  specificityMarginsOf,
  SpectrumError,
} from '../../spectra';
import { classifyResult, worse } from './gate';
import { getApprovedReferenceSet, onLibraryInvalidate } from './approved-set';
import { round, spectrumOfFile, toEngineBands } from './engine';
import type {
  DirectionScore,
  GatePair,
  GateReport,
  MatrixCell,
  MatrixMaterial,
  MethodVersion,
  SpecificityMatrix,
  StoredBand,
} from './contract';
import * as repo from './repo';

function direction(sample: Spectrum, refs: PreparedReference[], method: IdentityMethod): DirectionScore {
  // One reference on each side: criteria on the whole reference set (NIR distance, residual) cannot apply, so
  // they are left out explicitly and the pair is judged on the per-reference criteria.
  const r = scoreAgainst(sample, refs, method, { referenceSetCriteria: false });
  const { state } = classifyResult(r, specificityMarginsOf(method));
  if (r.verdict === 'invalid')
    return { state, verdict: 'invalid', correlation: null, derivativeCorrelation: null, bandsMatched: null };
  const best = r.references.find((x) => x.referenceId === r.bestReferenceId) ?? r.references[0];
  const band = best?.criteria.find((c) => c.key === 'band-concordance');
  return {
    state,
    verdict: r.verdict,
    correlation: best ? round(best.correlation, 6) : null,
    derivativeCorrelation: best && best.derivativeCorrelation !== null ? round(best.derivativeCorrelation, 6) : null,
    bandsMatched: band ? `${band.value} of ${band.limit}` : null,
  };
}

/** The specificity gate for a candidate reference under the grade's approved method. */
export async function specificityGate(
  db: Knex,
  candidate: { id: number; materialId: number; spectrum: Spectrum; bands: StoredBand[] },
  method: MethodVersion,
): Promise<GateReport> {
  const params = method.params;
  const candPrepared = prepareReference(
    {
      id: String(candidate.id),
      materialId: String(candidate.materialId),
      spectrum: candidate.spectrum,
      bands: toEngineBands(candidate.bands),
    },
    params,
  );
  const others = await db('reference_spectrum as r')
    .join('material as m', 'm.id', 'r.material_id')
    .join('identity_method as im', function () {
      this.on('im.material_id', '=', 'm.id').andOnVal('im.status', '=', 'approved');
    })
    .where('r.status', 'approved')
    .andWhere('m.active', 1)
    .andWhere('im.technique', method.technique)
    .andWhereNot('r.material_id', candidate.materialId)
    .select<(repo.ReferenceRow & { m_code: string; m_name: string })[]>('r.*', 'm.code as m_code', 'm.name as m_name')
    .orderBy(['r.material_id', 'r.id']);
  const pairs: GatePair[] = [];
  for (const o of others) {
    const base = {
      materialId: o.material_id,
      materialCode: o.m_code,
      materialName: o.m_name,
      referenceId: o.id,
      referenceCode: o.code,
    };
    try {
      const spectrum = await spectrumOfFile(db, o.file_id);
      const oPrepared = prepareReference(
        {
          id: String(o.id),
          materialId: String(o.material_id),
          spectrum,
          bands: toEngineBands(repo.toReference(o).bands),
        },
        params,
      );
      const otherAsSample = direction(spectrum, [candPrepared], params);
      const candidateAsSample = direction(candidate.spectrum, [oPrepared], params);
      const state = worse(otherAsSample.state ?? 'distinct', candidateAsSample.state ?? 'distinct');
      pairs.push({
        ...base,
        otherAsSample,
        candidateAsSample,
        wouldPass: otherAsSample.verdict === 'pass' || candidateAsSample.verdict === 'pass',
        state,
        notComparable:
          state === 'not-compared'
            ? 'a spectrum of the pair was refused by the quality check, so no verdict exists'
            : null,
      });
    } catch (e) {
      if (!(e instanceof SpectrumError)) throw e;
      pairs.push({
        ...base,
        otherAsSample: null,
        candidateAsSample: null,
        wouldPass: false,
        state: 'not-compared',
        notComparable: e.message,
      });
    }
  }
  // Anything but "distinct" blocks: would pass, within the margin of a limit, or not compared.
  const offending = pairs.filter((p) => p.state !== 'distinct');
  return {
    methodId: method.id,
    methodVersion: method.version,
    computedAt: new Date().toISOString(),
    pairs,
    offending,
    passed: offending.length === 0,
    margins: specificityMarginsOf(params),
  };
}

// ------------------------------------------------------------------ the matrix

const matrixCache = new Map<string, { fingerprint: string; value: SpecificityMatrix }>();
onLibraryInvalidate(() => matrixCache.clear());

/** The whole specificity matrix of one technique's approved library. */
export async function specificityMatrixFor(technique: string, db: Knex = getDb()): Promise<SpecificityMatrix> {
  const mats = await db('material as m')
    .join('identity_method as im', function () {
      this.on('im.material_id', '=', 'm.id').andOnVal('im.status', '=', 'approved');
    })
    .where('m.active', 1)
    .andWhere('im.technique', technique)
    .select<(repo.MaterialRow & { method_id: number; method_version: number })[]>(
      'm.*',
      'im.id as method_id',
      'im.version as method_version',
    )
    .orderBy('m.code');
  const refs = await db('reference_spectrum')
    .whereIn('material_id', mats.length ? mats.map((m) => m.id) : [0])
    .andWhere({ status: 'approved' })
    .select('id', 'material_id')
    .orderBy('id');
  const fingerprint = `${mats.map((m) => `${m.id}:${m.method_id}`).join(',')}|${refs.map((r) => r.id).join(',')}`;
  const hit = matrixCache.get(technique);
  if (hit && hit.fingerprint === fingerprint) return hit.value;

  const sets = new Map<number, NonNullable<Awaited<ReturnType<typeof getApprovedReferenceSet>>>>();
  for (const m of mats) {
    const s = await getApprovedReferenceSet(m.id, db);
    if (s && s.references.length) sets.set(m.id, s);
  }
  const materials: MatrixMaterial[] = mats
    .filter((m) => sets.has(m.id))
    .map((m) => ({
      id: m.id,
      code: m.code,
      name: m.name,
      technique,
      methodId: m.method_id,
      methodVersion: m.method_version,
      references: sets.get(m.id)!.references.length,
    }));
  const cells: MatrixCell[] = [];
  for (const row of materials) {
    const rowSet = sets.get(row.id)!;
    for (const col of materials) {
      const colSet = sets.get(col.id)!;
      let best: number | null = null;
      let passing = 0;
      let scored = 0;
      let notComparable = false;
      let withinMargin = false;
      for (const cr of colSet.references) {
        const judges = row.id === col.id ? rowSet.references.filter((r) => r.id !== cr.id) : rowSet.references;
        if (judges.length === 0) continue;
        try {
          const res = scoreAgainst(
            cr.spectrum,
            judges.map((j) => j.prepared),
            rowSet.method.params,
          );
          // An invalid spectrum or a reference-set model (NIR) that cannot be built: the pair cannot be
          // judged, which is never "distinct".
          if (res.verdict === 'invalid' || res.referenceModelProblems?.length) {
            notComparable = true;
            continue;
          }
          scored++;
          if (res.verdict === 'pass') passing++;
          else if (classifyResult(res, specificityMarginsOf(rowSet.method.params)).state === 'within-margin')
            withinMargin = true;
          const c = Math.max(...res.references.map((x) => x.correlation));
          if (best === null || c > best) best = c;
        } catch (e) {
          if (!(e instanceof SpectrumError)) throw e;
          notComparable = true;
        }
      }
      let state: MatrixCell['state'];
      if (row.id === col.id) state = scored === 0 ? 'single' : passing === scored ? 'self' : 'self-inconsistent';
      else if (passing > 0) state = 'would-pass';
      else if (withinMargin) state = 'within-margin';
      else if (notComparable || scored === 0) state = 'not-comparable';
      else state = 'distinct';
      cells.push({
        rowMaterialId: row.id,
        columnMaterialId: col.id,
        correlation: best === null ? null : round(best, 4),
        passing,
        scored,
        state,
      });
    }
  }
  const value: SpecificityMatrix = {
    technique,
    computedAt: new Date().toISOString(),
    materials,
    cells,
    notDiscriminated: cells
      .filter((c) => c.state === 'would-pass' || c.state === 'within-margin' || c.state === 'not-comparable')
      .map((c) => ({ rowMaterialId: c.rowMaterialId, columnMaterialId: c.columnMaterialId })),
  };
  matrixCache.set(technique, { fingerprint, value });
  return value;
}
