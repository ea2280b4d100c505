/** Data access of lots and containers. */
import type { Db } from '../../lib/db';
import type { ContainerRow, LotRow } from '../../lib/db-tables';
import { dateOnly } from '../../lib/dates';
import { SAMPLING_PLANS, SOURCE_STATUSES, type SourceStatus } from '../suppliers/contract';
import { IDENTITY_STATUSES, LOT_STATUSES, type LotSummary } from './contract';
import { oneOf, oneOfOrNull } from '../../lib/db';

/** A lot is never received from a blocked source (suppliers' receipt rules), so its recorded source status is one of these. */
const RECEIPT_SOURCE_STATUSES = SOURCE_STATUSES.filter((x): x is Exclude<SourceStatus, 'blocked'> => x !== 'blocked');

type LotJoined = LotRow & {
  m_code: string;
  m_name: string;
  m_grade: string;
  u_name: string | null;
  mf_name: string | null;
  ma_name: string | null;
};

export function toLotSummary(r: LotJoined): LotSummary {
  return {
    id: r.id,
    lotNumber: r.lot_number,
    material: { id: r.material_id, code: r.m_code, name: r.m_name, grade: r.m_grade },
    supplier: r.supplier,
    supplierId: r.supplier_id,
    manufacturer: r.manufacturer_id ? { id: r.manufacturer_id, name: r.mf_name ?? '' } : null,
    source: {
      id: r.source_id,
      statusAtReceipt: oneOfOrNull(RECEIPT_SOURCE_STATUSES, r.source_status, `lot ${r.lot_number} source status`),
      conditions: r.source_conditions,
      firstDelivery: !!r.first_delivery,
      samplingPlan: oneOfOrNull(SAMPLING_PLANS, r.sampling_plan, `lot ${r.lot_number} sampling plan`),
      sampleCount: r.sample_count,
    },
    supplierLot: r.supplier_lot,
    containerCount: r.container_count,
    receivedDate: dateOnly(r.received_date),
    notes: r.notes,
    status: oneOf(LOT_STATUSES, r.status, `lot ${r.lot_number} status`),
    identityStatus: oneOf(IDENTITY_STATUSES, r.identity_status, `lot ${r.lot_number} identity status`),
    createdBy: r.created_by
      ? { id: r.created_by, name: r.u_name ?? '' }
      : { id: 0, name: `ERP interface (machine account ${r.ma_name ?? '?'})` },
    erpReceiptNumber: r.erp_receipt_number ?? null,
    createdAt: new Date(r.created_at).toISOString(),
    updatedAt: new Date(r.updated_at).toISOString(),
  };
}

export function lotQuery(db: Db) {
  return db('lot as l')
    .join('material as m', 'm.id', 'l.material_id')
    .leftJoin('app_user as u', 'u.id', 'l.created_by')
    .leftJoin('supplier as mf', 'mf.id', 'l.manufacturer_id')
    .leftJoin('machine_account as ma', 'ma.id', 'l.erp_account_id')
    .select<LotJoined[]>(
      'l.*',
      'm.code as m_code',
      'm.name as m_name',
      'm.grade as m_grade',
      'u.full_name as u_name',
      'mf.name as mf_name',
      'ma.name as ma_name',
    );
}

export async function findLot(db: Db, id: number): Promise<LotSummary | undefined> {
  const r = await lotQuery(db).where('l.id', id).first();
  return r ? toLotSummary(r) : undefined;
}

export async function lockLot(db: Db, id: number): Promise<LotRow | undefined> {
  return db('lot').where({ id }).forUpdate().first();
}

export async function listLots(
  db: Db,
  f: { identityStatus?: string; search?: string },
  limit = 500,
): Promise<LotSummary[]> {
  const q = lotQuery(db).orderBy('l.id', 'desc').limit(limit);
  if (f.identityStatus) q.where('l.identity_status', f.identityStatus);
  if (f.search) {
    const s = `%${f.search.replace(/[%_\\]/g, (c) => '\\' + c)}%`;
    q.where((w) =>
      w
        .where('l.lot_number', 'like', s)
        .orWhere('l.supplier_lot', 'like', s)
        .orWhere('m.name', 'like', s)
        .orWhere('m.code', 'like', s),
    );
  }
  return (await q).map(toLotSummary);
}

export const containersOf = (db: Db, lotId: number): Promise<ContainerRow[]> =>
  db('container').where({ lot_id: lotId }).orderBy('seq');

export const findContainerByLabel = (db: Db, label: string): Promise<ContainerRow | undefined> =>
  db('container').where({ label }).first();

/** The highest lot number of a year (L-YYYY-NNNNN), or null. */
export async function lastLotNumberOfYear(db: Db, prefix: string): Promise<string | null> {
  const r = await db('lot')
    .where('lot_number', 'like', `${prefix}%`)
    .max<{ n: string | null }>('lot_number as n')
    .first();
  return r?.n ?? null;
}
