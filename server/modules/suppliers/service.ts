/**
 * Supplier master (issue 14 item 1). QA records suppliers and manufacturers, approves them per
 * material as a source, and sets the source's qualification status (new, qualified, conditional,
 * blocked) with its dates, conditions and sampling plan. Every change is e-signed and audited in
 * one transaction; nothing is overwritten (a status change is a new row).
 *
 * Receipt rules (used by the lot receipt, server/modules/lots/service.ts):
 * - blocked: refused, and the refused attempt is audited;
 * - conditional: allowed with QA's conditions copied onto the lot;
 * - new: allowed only with every container sampled and tested, flagged as a first delivery;
 * - qualified: the source's sampling plan applies.
 */
import type { Knex } from 'knex';
import { appendAudit, auditNow, type Actor } from '../../lib/audit';
import { checkSignatureCredentials, recordSignature } from '../../lib/esign';
import { AppError, conflict, notFound } from '../../lib/errors';
import { must } from '../../lib/db';
import type { AuthUser } from '../../lib/http';
import { insertWithNextNumber } from '../../lib/numbering';
import * as repo from './repo';
import {
  MIN_JUSTIFICATION,
  plannedSampleCount,
  type SamplingPlan,
  type SourceCreate,
  type SourceRecord,
  type SourceStatus,
  type SourceStatusInput,
  type SupplierCreate,
  type SupplierRecord,
} from './contract';
import { transactionWithRetry } from '../../lib/retry';

export async function createSupplier(
  db: Knex,
  user: AuthUser,
  input: SupplierCreate,
  ip: string | null,
): Promise<SupplierRecord> {
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'source-recorded',
    entityType: 'supplier',
    entityId: 'new',
    ip,
  });
  const now = new Date();
  const id = await transactionWithRetry(db, async (trx) => {
    const created = await insertWithNextNumber(trx, {
      table: 'supplier',
      column: 'code',
      prefix: 'SUP-',
      width: 4,
      row: (code) => ({
        code,
        name: input.name,
        kind: input.kind,
        address: input.address ?? '',
        note: input.note ?? null,
        created_by: user.id,
        created_at: now,
      }),
    });
    const content = { code: created.number, name: input.name, kind: input.kind, address: input.address ?? '' };
    await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'source-recorded',
      entityType: 'supplier',
      entityId: created.id,
      content,
      ip,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'supplier.created',
      entityType: 'supplier',
      entityId: created.id,
      after: { ...content, note: input.note ?? null },
      ip,
    });
    return created.id;
  });
  return (await repo.listSuppliers(db)).find((s) => s.id === id)!;
}

export async function createSource(
  db: Knex,
  user: AuthUser,
  input: SourceCreate,
  ip: string | null,
): Promise<SourceRecord> {
  const material = await db('material').where({ id: input.materialId }).first();
  if (!material) throw notFound('The material');
  const supplier = await repo.findSupplier(db, input.supplierId);
  if (!supplier) throw notFound('The supplier');
  if (supplier.kind === 'manufacturer')
    throw new AppError(
      422,
      'NOT_A_SUPPLIER',
      `${supplier.name} is recorded as a manufacturer only. Choose the company that supplies the material, and name ${supplier.name} as its manufacturer.`,
    );
  const manufacturerId = input.manufacturerId ?? null;
  if (manufacturerId !== null) {
    const m = await repo.findSupplier(db, manufacturerId);
    if (!m) throw notFound('The manufacturer');
    if (m.kind === 'supplier')
      throw new AppError(422, 'NOT_A_MANUFACTURER', `${m.name} is recorded as a supplier only, not as a manufacturer.`);
  }
  if (await repo.sourceFor(db, input.materialId, input.supplierId, manufacturerId))
    throw conflict('This source of the material is already recorded. Change its status instead.');
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'source-recorded',
    entityType: 'material_source',
    entityId: 'new',
    ip,
  });
  const now = new Date();
  const id = await transactionWithRetry(db, async (trx) => {
    const [sourceId] = await trx('material_source').insert({
      material_id: input.materialId,
      supplier_id: input.supplierId,
      manufacturer_id: manufacturerId,
      manufacturer_key: manufacturerId ?? 0,
      created_by: user.id,
      created_at: now,
    });
    const content = {
      sourceId,
      material: material.code,
      supplierId: input.supplierId,
      manufacturerId,
      status: 'new',
      samplingPlan: 'every-container',
    };
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'source-recorded',
      entityType: 'material_source',
      entityId: sourceId,
      content,
      statement: input.reason,
      ip,
    });
    await trx('source_status').insert({
      source_id: sourceId,
      status: 'new',
      conditions: null,
      sampling_plan: 'every-container',
      sampling_justification: null,
      effective_from: now.toISOString().slice(0, 10),
      review_by: null,
      reason: input.reason,
      signature_id: sig.id,
      set_by: user.id,
      set_at: now,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'source.created',
      entityType: 'material_source',
      entityId: sourceId,
      after: content,
      reason: input.reason,
      ip,
    });
    return sourceId;
  });
  return must(await repo.findSource(db, id), `Material source ${id}, created above,`);
}

/** Why a status change cannot be recorded, or null. The same rules hold as CHECK constraints (migration 140). */
export function statusProblem(input: {
  status: SourceStatus;
  samplingPlan: SamplingPlan;
  samplingJustification?: string | null;
  conditions?: string | null;
}): string | null {
  if (input.status === 'conditional' && !(input.conditions ?? '').trim())
    return 'A conditional source needs the conditions QA sets for its receipt.';
  if (input.samplingPlan !== 'every-container') {
    if (input.status !== 'qualified')
      return 'A reduced sampling plan is allowed only for a qualified source (EU GMP Annex 8 para 3: the validation weighs the supplier’s status and history). Sample every container.';
    if ((input.samplingJustification ?? '').trim().length < MIN_JUSTIFICATION)
      return `A reduced sampling plan needs QA's validation justification (at least ${MIN_JUSTIFICATION} characters; EU GMP Annex 8 para 2: sampling fewer containers needs a validated procedure).`;
  }
  return null;
}

export async function setSourceStatus(
  db: Knex,
  user: AuthUser,
  sourceId: number,
  input: SourceStatusInput,
  ip: string | null,
): Promise<SourceRecord> {
  const source = await repo.findSource(db, sourceId);
  if (!source) throw notFound('The source');
  const problem = statusProblem(input);
  if (problem) throw new AppError(422, 'SOURCE_STATUS_REFUSED', problem);
  if (input.reviewBy && input.reviewBy < input.effectiveFrom)
    throw new AppError(422, 'REVIEW_BEFORE_START', 'The review date cannot be before the effective date.');
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'source-status-set',
    entityType: 'material_source',
    entityId: sourceId,
    ip,
  });
  const now = new Date();
  await transactionWithRetry(db, async (trx) => {
    const row = {
      status: input.status,
      conditions: input.status === 'conditional' ? (input.conditions ?? null) : null,
      sampling_plan: input.samplingPlan,
      sampling_justification: input.samplingPlan === 'every-container' ? null : (input.samplingJustification ?? null),
      effective_from: input.effectiveFrom,
      review_by: input.reviewBy ?? null,
    };
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'source-status-set',
      entityType: 'material_source',
      entityId: sourceId,
      content: { sourceId, ...row },
      statement: input.reason,
      ip,
    });
    await trx('source_status').insert({
      source_id: sourceId,
      ...row,
      reason: input.reason,
      signature_id: sig.id,
      set_by: user.id,
      set_at: now,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'source.status-changed',
      entityType: 'material_source',
      entityId: sourceId,
      before: {
        status: source.current.status,
        samplingPlan: source.current.samplingPlan,
        conditions: source.current.conditions,
      },
      after: row,
      reason: input.reason,
      ip,
    });
  });
  return must(await repo.findSource(db, sourceId), `Material source ${sourceId}`);
}

export interface ReceiptSource {
  sourceId: number;
  supplier: { id: number; name: string };
  manufacturerId: number | null;
  status: SourceStatus;
  conditions: string | null;
  firstDelivery: boolean;
  samplingPlan: SamplingPlan;
  sampleCount: number;
}

/**
 * The source a lot is received from, judged for receipt. Refuses (422) a supplier that is not an
 * approved source of the material and a blocked source; both refusals are audited.
 */
export async function sourceForReceipt(
  db: Knex,
  actor: Actor,
  r: {
    materialId: number;
    supplierId: number;
    manufacturerId: number | null;
    containerCount: number;
    ip: string | null;
  },
): Promise<ReceiptSource> {
  const supplier = await repo.findSupplier(db, r.supplierId);
  if (!supplier) throw notFound('The supplier');
  const source = await repo.sourceFor(db, r.materialId, r.supplierId, r.manufacturerId);
  const refuse = async (code: string, message: string) => {
    await auditNow(db, {
      actor,
      action: 'lot.receipt-refused',
      entityType: 'material_source',
      entityId: source?.id ?? null,
      after: {
        materialId: r.materialId,
        supplierId: r.supplierId,
        manufacturerId: r.manufacturerId,
        status: source?.current.status ?? null,
      },
      reason: message,
      ip: r.ip,
    });
    return new AppError(422, code, message);
  };
  if (!source)
    throw await refuse(
      'SOURCE_NOT_APPROVED',
      `${supplier.name} is not an approved source of this material${r.manufacturerId ? ' for the named manufacturer' : ''}. QA must record the source before a lot can be received from it.`,
    );
  const cur = source.current;
  if (cur.status === 'blocked')
    throw await refuse(
      'SOURCE_BLOCKED',
      `${supplier.name} is blocked as a source of ${source.material.name} (since ${cur.effectiveFrom}: ${cur.reason}). The delivery cannot be received; keep it apart and tell QA.`,
    );
  const plan: SamplingPlan = cur.status === 'qualified' ? cur.samplingPlan : 'every-container';
  return {
    sourceId: source.id,
    supplier: { id: supplier.id, name: supplier.name },
    manufacturerId: r.manufacturerId,
    status: cur.status,
    conditions: cur.status === 'conditional' ? cur.conditions : null,
    firstDelivery: cur.status === 'new',
    samplingPlan: plan,
    sampleCount: plannedSampleCount(plan, r.containerCount),
  };
}
