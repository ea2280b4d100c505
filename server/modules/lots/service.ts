/**
 * Lot receipt (21 CFR 211.84(a): each lot is held in quarantine until sampled, tested and
 * released; EU GMP Annex 8: identity of every container). An operator registers a received lot
 * of a grade that has an approved identity method and at least one approved reference; Drumline
 * gives it an internal lot number and one labelled container per drum or bag.
 */
import { transactionWithRetry } from '../../lib/retry';
import type { Knex } from 'knex';
import type { IdentityMethodRow, MaterialRow } from '../../lib/db-tables';
import { appendAudit, type Actor } from '../../lib/audit';
import { formatSiteDate } from '../../lib/contract';
import { AppError } from '../../lib/errors';
import { RECEIVED_LOT, recordReceivedContainers } from './state';
import { irSuitabilityMap } from '../library';
import { sourceForReceipt } from '../suppliers';
import { enqueueEvent } from '../../lib/webhook-outbox';
import { insertWithNextNumber, yearOf } from '../../lib/numbering';
import * as repo from './repo';
import type { LotCreate, LotSummary, ReceivableMaterial } from './contract';

/**
 * Material grades a lot may be received for: active, approved method, at least one approved
 * reference; or marked "identity by IR not suitable" by QA (received and labelled, tested by the
 * test that replaces IR; an IR test of such a lot is refused, docs/methods.md).
 */
export async function receivableMaterials(db: Knex): Promise<ReceivableMaterial[]> {
  const ir = await irSuitabilityMap(db);
  const unsuitable = [...ir].filter(([, d]) => !d.suitable).map(([id]) => id);
  const rows = await db('material as m')
    .join('identity_method as im', function () {
      this.on('im.material_id', '=', 'm.id').andOnVal('im.status', '=', 'approved');
    })
    .where('m.active', 1)
    .whereExists(db('reference_spectrum as r').whereRaw('r.material_id = m.id').andWhere('r.status', 'approved'))
    .select<
      (Pick<MaterialRow, 'id' | 'code' | 'name' | 'grade'> &
        Pick<IdentityMethodRow, 'technique'> & { method_version: IdentityMethodRow['version'] })[]
    >('m.id', 'm.code', 'm.name', 'm.grade', 'im.version as method_version', 'im.technique')
    .orderBy('m.name');
  const out: ReceivableMaterial[] = rows
    .filter((r) => !unsuitable.includes(r.id))
    .map((r) => ({
      id: r.id,
      code: r.code,
      name: r.name,
      grade: r.grade,
      methodVersion: r.method_version,
      technique: r.technique,
      irNotSuitable: false,
    }));
  const marked = await db('material')
    .whereIn('id', unsuitable.length ? unsuitable : [0])
    .andWhere('active', 1)
    .select('id', 'code', 'name', 'grade');
  for (const m of marked)
    out.push({
      id: m.id,
      code: m.code,
      name: m.name,
      grade: m.grade,
      methodVersion: null,
      technique: null,
      irNotSuitable: true,
    });
  return out.sort((a, b) => a.name.localeCompare(b.name));
}

export function containerLabel(lotNumber: string, seq: number): string {
  return `${lotNumber}-${String(seq).padStart(3, '0')}`;
}

/** Today's calendar date at the site (YYYY-MM-DD), e.g. in Europe/Berlin shortly after midnight. */
export function siteToday(timeZone: string, now = new Date()): string {
  return formatSiteDate(now, timeZone);
}

export async function receiveLot(
  db: Knex,
  actor: Actor,
  input: LotCreate,
  ip: string | null,
  siteTimeZone = 'UTC',
  erp?: { accountId: number; receiptNumber: string },
): Promise<{ id: number; number: string }> {
  const material = await db('material').where({ id: input.materialId }).first();
  if (!material || !material.active)
    throw new AppError(422, 'MATERIAL_NOT_RECEIVABLE', 'This material grade does not exist or is no longer active.');
  const ok = (await receivableMaterials(db)).some((m) => m.id === input.materialId);
  if (!ok)
    throw new AppError(
      422,
      'MATERIAL_NOT_RECEIVABLE',
      `${material.name} has no approved identity method with an approved reference spectrum, so its lots cannot be tested yet. QA must approve them first.`,
    );
  const today = siteToday(siteTimeZone);
  if (input.receivedDate > today)
    throw new AppError(422, 'DATE_IN_FUTURE', 'The received date cannot be in the future.');
  // The approved source and its status decide whether the lot may be received and how it is sampled.
  const source = await sourceForReceipt(db, actor, {
    materialId: input.materialId,
    supplierId: input.supplierId,
    manufacturerId: input.manufacturerId ?? null,
    containerCount: input.containerCount,
    ip,
  });
  const now = new Date();
  const { id, number } = await transactionWithRetry(db, async (trx) => {
    const created = await insertWithNextNumber(trx, {
      table: 'lot',
      column: 'lot_number',
      prefix: `L-${yearOf(now)}-`,
      width: 5,
      row: (lotNumber) => ({
        lot_number: lotNumber,
        material_id: input.materialId,
        supplier: source.supplier.name,
        supplier_id: source.supplier.id,
        manufacturer_id: source.manufacturerId,
        source_id: source.sourceId,
        source_status: source.status,
        source_conditions: source.conditions,
        first_delivery: source.firstDelivery,
        sampling_plan: source.samplingPlan,
        sample_count: source.sampleCount,
        supplier_lot: input.supplierLot,
        container_count: input.containerCount,
        received_date: input.receivedDate,
        notes: input.notes ?? null,
        ...RECEIVED_LOT,
        erp_account_id: erp?.accountId ?? null,
        erp_receipt_number: erp?.receiptNumber ?? null,
        created_by: actor.id,
        created_at: now,
        updated_at: now,
      }),
    });
    const containers = Array.from({ length: input.containerCount }, (_, i) => ({
      lot_id: created.id,
      seq: i + 1,
      label: containerLabel(created.number, i + 1),
    }));
    for (let i = 0; i < containers.length; i += 200) await trx('container').insert(containers.slice(i, i + 200));
    const ids = (await trx('container').where({ lot_id: created.id }).select('id')).map((c) => c.id);
    await recordReceivedContainers(trx, { containerIds: ids, userId: actor.id, now });
    await appendAudit(trx, {
      actor,
      action: 'lot.received',
      entityType: 'lot',
      entityId: created.id,
      after: {
        lotNumber: created.number,
        materialId: input.materialId,
        material: `${material.name} (${material.code})`,
        supplier: source.supplier.name,
        supplierId: source.supplier.id,
        manufacturerId: source.manufacturerId,
        sourceId: source.sourceId,
        sourceStatus: source.status,
        sourceConditions: source.conditions,
        firstDelivery: source.firstDelivery,
        samplingPlan: source.samplingPlan,
        sampleCount: source.sampleCount,
        supplierLot: input.supplierLot,
        containerCount: input.containerCount,
        receivedDate: input.receivedDate,
        notes: input.notes ?? null,
        status: 'quarantine',
        identityStatus: 'awaiting-testing',
        labels: containers.map((c) => c.label),
        erpReceiptNumber: erp?.receiptNumber ?? null,
      },
      ip,
    });
    await enqueueEvent(trx, 'lot.received', {
      lotNumber: created.number,
      erpReceiptNumber: erp?.receiptNumber ?? null,
      material: material.code,
      supplier: source.supplier.name,
      supplierLot: input.supplierLot,
      containerCount: input.containerCount,
      samplingPlan: source.samplingPlan,
      sampleCount: source.sampleCount,
      firstDelivery: source.firstDelivery,
      status: 'quarantine',
    });
    return created;
  });
  return { id, number };
}

export async function listLots(db: Knex, f: { identityStatus?: string; search?: string }): Promise<LotSummary[]> {
  return repo.listLots(db, f);
}
