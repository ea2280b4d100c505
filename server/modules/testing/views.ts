/**
 * Read models of testing: a test with its containers and measurements, one measurement in
 * full (result, versions, instrument check), plot data (raw spectrum, and the overlay of sample,
 * best reference and their difference on the method grid), the verifier's review and queue.
 */
import type { Knex } from 'knex';
import { measurementHistory } from '../provenance';
import { testIntegrity, type FoundBy } from '../integrity';
import { must, parseJson } from '../../lib/db';
import type {
  AttemptPinRow,
  IdentityMethodRow,
  IdentityTestRow,
  LotRow,
  ReferenceSpectrumRow,
} from '../../lib/db-tables';
import { signaturesFor } from '../../lib/esign';
import { notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { describeAssignment, type IdentityMethod, prepare, shapeOf, type Spectrum } from '../../spectra';
import { readSpectrumOff } from '../../workers/pool';
import { loadContext } from './context';
import { toCheckInfo } from './instrument-status';
import { inScope, latestByContainer, readiness } from './outcome';
import * as repo from './repo';
import {
  type AttemptPin,
  type CitedInstrumentCheck,
  type InstrumentRef,
  type MeasurementDetail,
  type MeasurementPlotData,
  type QueueTest,
  type ReferenceRef,
  type ReviewData,
  type StoredResult,
  type TestDetail,
  TEST_STATUS_LABELS,
} from './contract';

export async function methodInfo(db: Knex, methodId: number) {
  const m = await db('identity_method').where({ id: methodId }).first();
  if (!m) return null;
  return {
    id: m.id,
    version: m.version,
    status: m.status,
    technique: m.technique,
    approvedAt: m.approved_at ? new Date(m.approved_at).toISOString() : null,
    params: parseJson<IdentityMethod | null>(m.params, null),
  };
}

export async function instrumentInfo(db: Knex, instrumentId: number | null): Promise<InstrumentRef | null> {
  if (!instrumentId) return null;
  const i = await db('instrument').where({ id: instrumentId }).first();
  return i
    ? {
        id: i.id,
        name: i.name,
        serialNumber: i.serial_number,
        technique: i.technique,
        sampling: i.sampling,
      }
    : null;
}

export async function getTestDetail(db: Knex, testId: number): Promise<TestDetail> {
  const ctx = await loadContext(db, testId);
  const { test } = ctx;
  const latest = latestByContainer(ctx.measurements, testId);
  const names = await repo.userNames(db, [test.performed_by, test.verified_by, test.created_by]);
  const ready = readiness(ctx.containers, ctx.scope, ctx.measurements);
  const method = await methodInfo(db, test.method_id);
  const status = repo.testStatusOf(test.status);
  return {
    id: test.id,
    lot: {
      id: ctx.lot.id,
      lotNumber: ctx.lot.lotNumber,
      material: ctx.lot.material,
      status: ctx.lot.status,
      identityStatus: ctx.lot.identityStatus,
      containerCount: ctx.lot.containerCount,
    },
    attempt: test.attempt,
    status,
    statusLabel: TEST_STATUS_LABELS[status],
    method: method && { id: method.id, version: method.version, technique: method.technique, status: method.status },
    instrument: await instrumentInfo(db, test.instrument_id),
    retestOfInvestigationId: test.retest_of_investigation_id,
    createdBy: { id: test.created_by, name: names.get(test.created_by) ?? '' },
    createdAt: new Date(test.created_at).toISOString(),
    performedBy: test.performed_by ? { id: test.performed_by, name: names.get(test.performed_by) ?? '' } : null,
    verifiedBy: test.verified_by ? { id: test.verified_by, name: names.get(test.verified_by) ?? '' } : null,
    returnedReason: test.returned_reason,
    signatures: await signaturesFor(db, 'identity_test', testId),
    readiness: {
      ready: ready.ready,
      missing: ready.missing.map((c) => c.label),
      invalid: ready.invalid.map((c) => c.label),
      measured: ready.measured,
      inScope: ready.inScope,
    },
    measurerIds: [...new Set(ctx.measurements.map((m) => m.createdBy.id))],
    containers: ctx.containers.map((c) => ({
      id: c.id,
      seq: c.seq,
      label: c.label,
      inScope: inScope(ctx.scope, c.id),
      latest: latest.get(c.id) ?? null,
      measurements: ctx.measurements.filter((m) => m.containerId === c.id),
    })),
  };
}

async function referenceInfos(db: Knex, ids: number[]): Promise<ReferenceRef[]> {
  if (!ids.length) return [];
  const rows = await db('reference_spectrum as r')
    .join('material as m', 'm.id', 'r.material_id')
    .whereIn('r.id', ids)
    .select<
      (Pick<ReferenceSpectrumRow, 'id' | 'code' | 'status' | 'approved_at' | 'approved_method_id' | 'file_id'> & {
        m_code: string;
        m_name: string;
      })[]
    >(
      'r.id',
      'r.code',
      'r.status',
      'r.approved_at',
      'r.approved_method_id',
      'r.file_id',
      'm.code as m_code',
      'm.name as m_name',
    );
  return rows.map((r) => ({
    id: r.id,
    code: r.code,
    status: r.status,
    approvedAt: r.approved_at ? new Date(r.approved_at).toISOString() : null,
    material: { code: r.m_code, name: r.m_name },
  }));
}

/**
 * A stored result as GMP views show it (docs/methods.md, "Band assignments"): a band row carries
 * only the assignment QA set. Results recorded before issue 18 carry the correlation table's text
 * for every band; that text is blanked here (the stored result stays as recorded), and its
 * bracketed copy in the explanation sentences with it.
 */
export function gmpResultView(result: StoredResult | null): StoredResult | null {
  if (!result) return result;
  const tableText = (position: number, width: number | null | undefined) => [
    describeAssignment(position, width === null || width === undefined ? undefined : shapeOf(width)),
    describeAssignment(position),
  ];
  let explanation = result.explanation;
  const bands = result.bands.map((r) => {
    if (!r.assignment || !tableText(r.referenceBand, r.referenceWidth).includes(r.assignment)) return r;
    explanation = explanation.map((e) => e.split(` (${r.assignment})`).join(''));
    return { ...r, assignment: '' };
  });
  return { ...result, bands, explanation };
}

export async function getMeasurementDetail(db: Knex, id: number): Promise<MeasurementDetail> {
  const m = await repo.findMeasurementSummary(db, id);
  if (!m) throw notFound('The measurement');
  const row = must(await repo.findMeasurementRow(db, id), `measurement ${id}`);
  const check = await db('instrument_check').where({ id: m.instrumentCheckId }).first();
  return {
    ...m,
    result: gmpResultView(parseJson<StoredResult | null>(row.result, null)),
    method: await methodInfo(db, m.methodId).then(
      (x) => x && { id: x.id, version: x.version, technique: x.technique, status: x.status },
    ),
    references: await referenceInfos(db, m.referenceIds),
    instrument: await instrumentInfo(db, m.instrumentId),
    instrumentCheck: check ? (({ result: _r, ...rest }) => rest)(toCheckInfo(check)) : null,
  };
}

const plotCache = new Map<number, MeasurementPlotData>();

async function spectrumOfFile(db: Knex, fileId: number): Promise<Spectrum> {
  const f = await db('stored_file').where({ id: fileId }).first();
  if (!f) throw notFound('The stored file');
  return readSpectrumOff(new Uint8Array(f.data), f.file_name);
}

function thin(x: ArrayLike<number>, ys: ArrayLike<number>[], max = 4000) {
  const n = x.length;
  const step = Math.max(1, Math.ceil(n / max));
  const ox: number[] = [];
  const oy: number[][] = ys.map(() => []);
  for (let i = 0; i < n; i += step) {
    ox.push(Math.round(x[i] * 1000) / 1000);
    ys.forEach((y, k) => oy[k].push(Number.isFinite(y[i]) ? Math.round(y[i] * 1e6) / 1e6 : NaN));
  }
  return { x: ox, ys: oy };
}

/**
 * Plot data of a measurement (recomputed from the stored raw files; deterministic):
 * raw = the sample as read (absorbance-like, wavenumber axis);
 * overlay = baseline-corrected, smoothed traces of sample and best reference on the method
 * grid (scaled 0..1, excluded regions blank) and their difference (sample - reference).
 */
export async function measurementPlot(db: Knex, id: number): Promise<MeasurementPlotData> {
  const hit = plotCache.get(id);
  if (hit) return hit;
  const row = await repo.findMeasurementRow(db, id);
  if (!row) throw notFound('The measurement');
  const result = parseJson<StoredResult | null>(row.result, null);
  const method = await methodInfo(db, row.method_id);
  const sample = await spectrumOfFile(db, row.file_id);
  const raw = thin(sample.x, [sample.y]);
  let overlay: {
    x: number[];
    sample: number[];
    reference: number[];
    difference: number[];
    referenceCode: string;
  } | null = null;
  if (method?.params && result?.bestReferenceId) {
    const ref = await db('reference_spectrum')
      .where({ id: Number(result.bestReferenceId) })
      .first();
    if (ref) {
      const refSpectrum = await spectrumOfFile(db, ref.file_id);
      const ps = prepare(sample, method.params);
      const pr = prepare(refSpectrum, method.params);
      const diff = new Float64Array(ps.grid.length);
      const s = new Float64Array(ps.grid.length);
      const r = new Float64Array(ps.grid.length);
      for (let i = 0; i < ps.grid.length; i++) {
        const used = ps.mask[i] === 1;
        s[i] = used ? ps.trace[i] : NaN;
        r[i] = used ? pr.trace[i] : NaN;
        diff[i] = used ? ps.trace[i] - pr.trace[i] : NaN;
      }
      const t = thin(ps.grid, [s, r, diff]);
      overlay = { x: t.x, sample: t.ys[0], reference: t.ys[1], difference: t.ys[2], referenceCode: ref.code };
    }
  }
  const out = {
    measurementId: id,
    raw: { x: raw.x, y: raw.ys[0], yKind: sample.meta.yKind, title: sample.meta.title },
    overlay,
    excludedRegions: method?.params?.excludedRegions ?? [],
  };
  if (plotCache.size > 500) plotCache.delete(plotCache.keys().next().value as number);
  plotCache.set(id, out);
  return out;
}

/** Everything a verifier reviews: the test, and per container its latest measurement in full. */
export async function getReview(db: Knex, testId: number, by: FoundBy = { foundIn: 'review' }): Promise<ReviewData> {
  const detail = await getTestDetail(db, testId);
  // The review page hashes the bytes it shows (raw spectra, checks, references) and re-checks the signatures.
  const integrity = await testIntegrity(db, testId, by);
  const latestIds = detail.containers.filter((c) => c.latest).map((c) => c.latest!.id);
  const measurements = [];
  for (const mid of latestIds) measurements.push(await getMeasurementDetail(db, mid));
  const checkIds = [...new Set(measurements.map((m) => m.instrumentCheckId))];
  const methodIds = [...new Set(measurements.map((m) => m.methodId))];
  const refIds = [...new Set(measurements.flatMap((m) => m.referenceIds))];
  return {
    integrity,
    test: detail,
    measurements,
    history: await measurementHistory(db, testId),
    instrumentChecks: measurements
      .map((m) => m.instrumentCheck)
      .filter(
        (c, i, a): c is CitedInstrumentCheck =>
          !!c && a.findIndex((x) => x?.id === c.id) === i && checkIds.includes(c.id),
      ),
    methods: (await Promise.all(methodIds.map((id) => methodInfo(db, id))))
      .filter((x) => x !== null)
      .map((x) => ({
        id: x.id,
        version: x.version,
        technique: x.technique,
        approvedAt: x.approvedAt,
        params: x.params,
      })),
    references: await referenceInfos(db, refIds),
    pinned: await attemptPin(db, testId),
  };
}

async function attemptPin(db: Knex, testId: number): Promise<AttemptPin | null> {
  const pin = await db('attempt_pin as p')
    .join('identity_method as m', 'm.id', 'p.method_id')
    .where('p.test_id', testId)
    .first<
      | (Pick<AttemptPinRow, 'method_id' | 'reference_ids'> & Pick<IdentityMethodRow, 'version' | 'material_id'>)
      | undefined
    >('p.method_id', 'p.reference_ids', 'm.version', 'm.material_id');
  if (!pin) return null;
  const ids = JSON.parse(pin.reference_ids) as number[];
  const codes = await db('reference_spectrum')
    .whereIn('id', ids.length ? ids : [0])
    .orderBy('id')
    .select('code');
  const current = await db('identity_method')
    .where({ material_id: pin.material_id, status: 'approved' })
    .first('id', 'version');
  return {
    methodId: pin.method_id,
    methodVersion: pin.version,
    referenceCodes: codes.map((c) => c.code),
    newerApprovedVersion: current && current.id !== pin.method_id ? current.version : null,
  };
}

/** Tests awaiting verification that this user may verify (not performed or measured by them). */
export async function verificationQueue(db: Knex, user: AuthUser): Promise<QueueTest[]> {
  const rows = await db('identity_test as t')
    .join('lot as l', 'l.id', 't.lot_id')
    .join('material as m', 'm.id', 'l.material_id')
    .leftJoin('app_user as p', 'p.id', 't.performed_by')
    .where('t.status', 'awaiting-verification')
    .whereNot('t.performed_by', user.id)
    .whereNotExists(db('measurement as ms').whereRaw('ms.test_id = t.id').andWhere('ms.created_by', user.id))
    .select<
      (Pick<IdentityTestRow, 'id' | 'attempt' | 'updated_at' | 'retest_of_investigation_id'> &
        Pick<LotRow, 'lot_number' | 'container_count'> & {
          lot_id: number;
          m_name: string;
          m_code: string;
          p_name: string | null;
        })[]
    >(
      't.id',
      't.attempt',
      't.updated_at',
      't.retest_of_investigation_id',
      'l.id as lot_id',
      'l.lot_number',
      'l.container_count',
      'm.name as m_name',
      'm.code as m_code',
      'p.full_name as p_name',
    )
    .orderBy('t.updated_at');
  const fails = rows.length
    ? await db('measurement')
        .whereIn(
          'test_id',
          rows.map((r) => r.id),
        )
        .select('test_id', 'container_id', 'id', 'verdict')
    : [];
  return rows.map((r) => {
    const latest = new Map<number, { id: number; verdict: string }>();
    for (const f of fails.filter((f) => f.test_id === r.id)) {
      const p = latest.get(f.container_id);
      if (!p || f.id > p.id) latest.set(f.container_id, f);
    }
    return {
      testId: r.id,
      lotId: r.lot_id,
      lotNumber: r.lot_number,
      material: `${r.m_name} (${r.m_code})`,
      attempt: r.attempt,
      isRetest: !!r.retest_of_investigation_id,
      containers: latest.size,
      failing: [...latest.values()].filter((m) => m.verdict === 'fail').length,
      performedBy: r.p_name ?? '',
      signedPerformedAt: new Date(r.updated_at).toISOString(),
    };
  });
}
