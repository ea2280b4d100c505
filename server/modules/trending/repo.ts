/** Data access of trending: passed results of verified tests, baselines and signals. */
import type { Knex } from 'knex';
import { oneOf, parseJson } from '../../lib/db';
import type {
  ContainerRow,
  IdentityMethodRow,
  InstrumentRow,
  LotRow,
  MaterialRow,
  MeasurementRow,
  TrendBaselineRow,
  TrendSignalRow,
} from '../../lib/db-tables';
import { METRICS, SCOPE_KINDS, type Metric, type ScopeKind, type TrendBaseline, type TrendSignal } from './contract';
import { RULES } from './control-chart';

type Db = Knex | Knex.Transaction;

const SIGNAL_STATUSES = ['open', 'acknowledged', 'investigated'] as const satisfies readonly TrendSignal['status'][];

interface ResultJson {
  bestReferenceId?: string | null;
  references?: {
    referenceId: string;
    correlation: number;
    derivativeCorrelation: number | null;
    bands?: { shift: number | null }[];
  }[];
}

export interface TrendRow {
  measurementId: number;
  at: Date;
  materialId: number;
  materialName: string;
  methodId: number;
  methodVersion: number;
  lotNumber: string;
  container: string;
  source: string;
  instrumentId: number;
  instrument: string;
  operatorId: number;
  operator: string;
  metrics: Record<Metric, number | null>;
}

/** The three trended figures of a stored identity result, against its best reference. */
export function metricsOf(resultJson: string): Record<Metric, number | null> {
  const r = parseJson<ResultJson>(resultJson, {});
  const best = r.references?.find((x) => x.referenceId === r.bestReferenceId) ?? r.references?.[0];
  if (!best) return { correlation: null, 'derivative-correlation': null, 'band-shift': null };
  const shifts = (best.bands ?? []).map((b) => b.shift).filter((s): s is number => typeof s === 'number');
  return {
    correlation: Number.isFinite(best.correlation) ? best.correlation : null,
    'derivative-correlation': typeof best.derivativeCorrelation === 'number' ? best.derivativeCorrelation : null,
    'band-shift': shifts.length ? Math.max(...shifts.map(Math.abs)) : null,
  };
}

/** A passed measurement with what its trend point names (the select of base()). */
type BaseRow = Pick<MeasurementRow, 'id' | 'created_at' | 'result' | 'method_id' | 'instrument_id' | 'created_by'> &
  Pick<LotRow, 'lot_number' | 'supplier'> &
  Pick<ContainerRow, 'label'> & {
    method_version: IdentityMethodRow['version'];
    material_id: MaterialRow['id'];
    material_name: MaterialRow['name'];
    instrument_name: InstrumentRow['name'];
    full_name: string;
  };

function base(db: Db) {
  return db('measurement as me')
    .join('identity_test as t', 't.id', 'me.test_id')
    .join('lot as l', 'l.id', 't.lot_id')
    .join('material as ma', 'ma.id', 'l.material_id')
    .join('identity_method as im', 'im.id', 'me.method_id')
    .join('container as c', 'c.id', 'me.container_id')
    .join('instrument as ins', 'ins.id', 'me.instrument_id')
    .join('app_user as u', 'u.id', 'me.created_by')
    .where('me.verdict', 'pass')
    .where('t.status', 'verified')
    .select<BaseRow[]>(
      'me.id',
      'me.created_at',
      'me.result',
      'me.method_id',
      'me.instrument_id',
      'me.created_by',
      'im.version as method_version',
      'ma.id as material_id',
      'ma.name as material_name',
      'l.lot_number',
      'l.supplier',
      'c.label',
      'ins.name as instrument_name',
      'u.full_name',
    )
    .orderBy([
      { column: 'me.created_at', order: 'asc' },
      { column: 'me.id', order: 'asc' },
    ]);
}

function toTrendRow(r: BaseRow): TrendRow {
  return {
    measurementId: r.id,
    at: new Date(r.created_at),
    materialId: r.material_id,
    materialName: r.material_name,
    methodId: r.method_id,
    methodVersion: r.method_version,
    lotNumber: r.lot_number,
    container: r.label,
    source: r.supplier,
    instrumentId: r.instrument_id,
    instrument: r.instrument_name,
    operatorId: r.created_by,
    operator: r.full_name,
    metrics: metricsOf(r.result),
  };
}

/** Passed measurements of verified tests under one identity-method version, oldest first. */
export async function trendRows(db: Db, methodId: number): Promise<TrendRow[]> {
  return (await base(db).where('me.method_id', methodId)).map(toTrendRow);
}

/** Identity-method versions that have at least one trended point. */
export async function trendedMethodIds(db: Db): Promise<number[]> {
  const rows = await db('measurement as me')
    .join('identity_test as t', 't.id', 'me.test_id')
    .where('me.verdict', 'pass')
    .where('t.status', 'verified')
    .distinct<{ id: number }[]>('me.method_id as id')
    .orderBy('me.method_id');
  return rows.map((r) => r.id);
}

export async function latestBaseline(db: Db, methodId: number): Promise<TrendBaseline | null> {
  const r = await db('trend_baseline as b')
    .join('app_user as u', 'u.id', 'b.fixed_by')
    .where('b.method_id', methodId)
    .orderBy('b.id', 'desc')
    .first<(TrendBaselineRow & { full_name: string }) | undefined>('b.*', 'u.full_name');
  if (!r) return null;
  return {
    id: r.id,
    methodId: r.method_id,
    from: new Date(r.period_from).toISOString(),
    to: new Date(r.period_to).toISOString(),
    reason: r.reason,
    fixedBy: { id: r.fixed_by, name: r.full_name },
    fixedAt: new Date(r.fixed_at).toISOString(),
  };
}

/** A trend signal with the names it is shown with (the select of signalQuery()). */
type SignalRow = TrendSignalRow & {
  material_name: string;
  method_version: number;
  ack_name: string | null;
  investigation_number: string | null;
};

function signalQuery(db: Db) {
  return db('trend_signal as s')
    .join('material as ma', 'ma.id', 's.material_id')
    .join('identity_method as im', 'im.id', 's.method_id')
    .leftJoin('app_user as a', 'a.id', 's.acknowledged_by')
    .leftJoin('investigation as inv', 'inv.id', 's.investigation_id')
    .select<SignalRow[]>(
      's.*',
      'ma.name as material_name',
      'im.version as method_version',
      'a.full_name as ack_name',
      'inv.number as investigation_number',
    );
}

function toSignal(r: SignalRow): TrendSignal {
  const rule = Object.values(RULES).find((x) => x.key === r.rule);
  return {
    id: r.id,
    materialId: r.material_id,
    materialName: r.material_name,
    methodId: r.method_id,
    methodVersion: r.method_version,
    metric: oneOf(METRICS, r.metric, 'trend metric'),
    scopeKind: oneOf(SCOPE_KINDS, r.scope_kind, 'trend scope'),
    scopeValue: r.scope_value,
    scopeLabel: r.scope_label,
    rule: r.rule,
    ruleText: rule?.text ?? r.rule,
    ruleSource: rule?.source ?? '',
    measurementId: r.measurement_id,
    pointIds: parseJson<number[]>(r.point_ids, []),
    value: r.value,
    detail: r.detail,
    status: oneOf(SIGNAL_STATUSES, r.status, 'trend signal status'),
    raisedAt: new Date(r.raised_at).toISOString(),
    investigationId: r.investigation_id,
    investigationNumber: r.investigation_number,
    acknowledgedBy: r.acknowledged_by ? { id: r.acknowledged_by, name: r.ack_name ?? '' } : null,
    acknowledgedAt: r.acknowledged_at ? new Date(r.acknowledged_at).toISOString() : null,
    ackComment: r.ack_comment,
  };
}

export async function listSignals(
  db: Db,
  f: {
    status?: 'open' | 'all';
    materialId?: number;
    methodId?: number;
    metric?: Metric;
    scope?: ScopeKind;
    value?: string;
  },
): Promise<TrendSignal[]> {
  const q = signalQuery(db).orderBy('s.id', 'desc').limit(500);
  if (f.status === 'open') q.where('s.status', 'open');
  if (f.materialId) q.where('s.material_id', f.materialId);
  if (f.methodId) q.where('s.method_id', f.methodId);
  if (f.metric) q.where('s.metric', f.metric);
  if (f.scope) q.where('s.scope_kind', f.scope).where('s.scope_value', f.value ?? '');
  return (await q).map(toSignal);
}

export async function findSignal(db: Db, id: number): Promise<TrendSignal | undefined> {
  const r = await signalQuery(db).where('s.id', id).first();
  return r ? toSignal(r) : undefined;
}

export const lockSignal = (db: Knex.Transaction, id: number) => db('trend_signal').where({ id }).forUpdate().first();
