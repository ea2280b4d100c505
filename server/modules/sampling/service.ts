/**
 * Sampling (issue 14 item 3). Sampling precedes testing (21 CFR 211.84(a): each lot is held until
 * sampled, tested and released; FDA's Q&A: samples are taken after receipt). Per lot: the line
 * clearance of the booth before this lot, signed; then one sampling record (sampler, area, time,
 * tool, reserve samples) with every sampled container opened, sampled and resealed, signed.
 *
 * Which containers: under the plan "every container" (the default, and the rule of EU GMP Annex 8
 * para 2) all of them; under the validated reduced plan of a qualified source at least
 * ceil(1 + sqrt(N)) (WHO TRS 929 Annex 4, 5.1). A container that was not sampled cannot be measured
 * (service and database trigger), and "every container has a result" then means every sampled one.
 */
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import { oneOf, oneOfOrNull, type Db } from '../../lib/db';
import type { AppUserRow, LineClearanceRow, SampledContainerRow, SamplingRecordRow } from '../../lib/db-tables';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { AppError, conflict, notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import * as lots from '../lots';
import { currentStatuses, holdsOf, setContainerStatus } from '../lots';
import { SAMPLING_PLANS, SAMPLING_PLAN_LABELS } from '../suppliers/contract';
import type {
  LineClearanceInput,
  LineClearanceRecord,
  LotSamplingView,
  SamplingInput,
  SamplingRecordView,
} from './contract';
import { statusHistory } from './status';
import { transactionWithRetry } from '../../lib/retry';

/**
 * The containers of a lot that were sampled, or null for a lot received before sampling records
 * existed (no plan: all containers count, as before).
 */
export async function sampledContainerIds(db: Db, lotId: number): Promise<number[] | null> {
  const lot = await db('lot').where({ id: lotId }).first('sampling_plan');
  if (!lot?.sampling_plan) return null;
  const rows = await db('sampled_container as s')
    .join('sampling_record as r', 'r.id', 's.sampling_record_id')
    .where('r.lot_id', lotId)
    .select<Pick<SampledContainerRow, 'container_id'>[]>('s.container_id');
  return rows.map((r) => r.container_id);
}

async function clearances(db: Db, lotId: number): Promise<LineClearanceRecord[]> {
  const rows = await db('line_clearance as l')
    .join('app_user as u', 'u.id', 'l.cleared_by')
    .where('l.lot_id', lotId)
    .orderBy('l.id')
    .select<(LineClearanceRow & { u_name: AppUserRow['full_name'] })[]>('l.*', 'u.full_name as u_name');
  const sigs = await signaturesFor(db, 'lot', lotId);
  return rows.map((r) => ({
    id: r.id,
    area: r.area,
    previousUse: r.previous_use,
    note: r.note,
    clearedBy: { id: r.cleared_by, name: r.u_name },
    clearedAt: new Date(r.cleared_at).toISOString(),
    signature: sigs.find((s) => s.id === r.signature_id) ?? null,
  }));
}

export async function samplingView(db: Db, lotId: number): Promise<LotSamplingView> {
  const lot = await db('lot').where({ id: lotId }).first();
  if (!lot) throw notFound('The lot');
  const cl = await clearances(db, lotId);
  const rec = await db('sampling_record as r')
    .join('app_user as u', 'u.id', 'r.sampler_id')
    .where('r.lot_id', lotId)
    .first<(SamplingRecordRow & { u_name: AppUserRow['full_name'] }) | undefined>('r.*', 'u.full_name as u_name');
  const containers = await lots.containersOf(db, lotId);
  const labelOf = new Map(containers.map((c) => [c.id, c.label]));
  let record: SamplingRecordView | null = null;
  if (rec) {
    const sc = await db('sampled_container').where({ sampling_record_id: rec.id }).orderBy('container_id');
    const sigs = await signaturesFor(db, 'lot', lotId);
    record = {
      id: rec.id,
      lineClearance: cl.find((c) => c.id === rec.line_clearance_id)!,
      area: rec.area,
      sampledAt: new Date(rec.sampled_at).toISOString(),
      tool: rec.tool,
      reserve: { quantity: Number(rec.reserve_quantity), unit: rec.reserve_unit, location: rec.reserve_location },
      note: rec.note,
      samplingPlan: oneOf(SAMPLING_PLANS, rec.sampling_plan, `sampling record ${rec.id} plan`),
      sampler: { id: rec.sampler_id, name: rec.u_name },
      containers: sc.map((s) => ({
        containerId: s.container_id,
        label: labelOf.get(s.container_id) ?? '',
        opened: !!s.opened,
        sampled: !!s.sampled,
        resealed: !!s.resealed,
        note: s.note,
      })),
      signature: sigs.find((s) => s.id === rec.signature_id) ?? null,
    };
  }
  const history = await statusHistory(db, lotId);
  const current = await currentStatuses(db, lotId);
  const holds = await holdsOf(db, lotId);
  return {
    lotId,
    samplingPlan: oneOfOrNull(SAMPLING_PLANS, lot.sampling_plan, `lot ${lot.lot_number} sampling plan`),
    sampleCount: lot.sample_count,
    clearances: cl,
    record,
    containers: containers.map((c) => ({
      containerId: c.id,
      seq: c.seq,
      label: c.label,
      status: current.get(c.id) ?? 'quarantine',
      heldBy: holds.get(c.id) ?? [],
      history: history.filter((h) => h.containerId === c.id),
    })),
  };
}

async function sampleableLot(db: Db, lotId: number) {
  const lot = await db('lot').where({ id: lotId }).first();
  if (!lot) throw notFound('The lot');
  if (lot.status !== 'quarantine')
    throw conflict(`Lot ${lot.lot_number} is ${lot.status}; it is not sampled any more.`);
  if (!lot.sampling_plan)
    throw conflict(`Lot ${lot.lot_number} was received before sampling records existed; it has no sampling plan.`);
  if (await db('sampling_record').where({ lot_id: lotId }).first('id'))
    throw conflict(`Lot ${lot.lot_number} has been sampled already; its sampling record cannot be replaced.`);
  return { lot, plan: oneOf(SAMPLING_PLANS, lot.sampling_plan, `lot ${lot.lot_number} sampling plan`) };
}

export async function recordLineClearance(
  db: Knex,
  user: AuthUser,
  lotId: number,
  input: LineClearanceInput,
  ip: string | null,
): Promise<LotSamplingView> {
  const { lot } = await sampleableLot(db, lotId);
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'line-cleared',
    entityType: 'lot',
    entityId: lotId,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    const content = {
      lot: lot.lot_number,
      area: input.area,
      previousUse: input.previousUse ?? null,
      statement: 'The area is clean and holds no material, label or container of another lot.',
    };
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'line-cleared',
      entityType: 'lot',
      entityId: lotId,
      content,
      statement: input.note ?? null,
      ip,
    });
    const [id] = await trx('line_clearance').insert({
      lot_id: lotId,
      area: input.area,
      previous_use: input.previousUse ?? null,
      note: input.note ?? null,
      signature_id: sig.id,
      cleared_by: user.id,
      cleared_at: new Date(),
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'lot.line-cleared',
      entityType: 'lot',
      entityId: lotId,
      after: { ...content, lineClearanceId: id },
      ip,
    });
  });
  return samplingView(db, lotId);
}

export async function recordSampling(
  db: Knex,
  user: AuthUser,
  lotId: number,
  input: SamplingInput,
  ip: string | null,
): Promise<LotSamplingView> {
  const { lot, plan } = await sampleableLot(db, lotId);
  const clearance = await db('line_clearance').where({ id: input.lineClearanceId, lot_id: lotId }).first();
  if (!clearance)
    throw new AppError(
      422,
      'NO_LINE_CLEARANCE',
      `Lot ${lot.lot_number} has no such line clearance. Clear the sampling booth for this lot and sign it first.`,
    );
  const sampledAt = new Date(input.sampledAt);
  if (sampledAt.getTime() > Date.now() + 60_000)
    throw new AppError(422, 'SAMPLED_IN_FUTURE', 'The sampling time cannot be in the future.');
  if (sampledAt.getTime() < new Date(clearance.cleared_at).getTime() - 60_000)
    throw new AppError(
      422,
      'SAMPLED_BEFORE_CLEARANCE',
      'The sampling time is before the line clearance of the booth: the booth is cleared before the lot is sampled.',
    );
  const containers = await lots.containersOf(db, lotId);
  const byId = new Map(containers.map((c) => [c.id, c]));
  const ids = input.containers.map((c) => c.containerId);
  if (new Set(ids).size !== ids.length)
    throw new AppError(422, 'CONTAINER_TWICE', 'A container is named twice in the sampling record.');
  const foreign = ids.filter((id) => !byId.has(id));
  if (foreign.length)
    throw new AppError(422, 'NOT_OF_THIS_LOT', `Container ${foreign[0]} is not a container of lot ${lot.lot_number}.`);
  const unfinished = input.containers.find((c) => !c.opened || !c.sampled || !c.resealed);
  if (unfinished) {
    const missing = (['opened', 'sampled', 'resealed'] as const).filter((k) => !unfinished[k]);
    throw new AppError(
      422,
      'SAMPLING_INCOMPLETE',
      `Container ${byId.get(unfinished.containerId)!.label} is not recorded as ${missing.join(' and ')}. Record a container only once it was opened, sampled and resealed.`,
    );
  }
  const needed = plan === 'every-container' ? containers.length : Number(lot.sample_count);
  if (ids.length < needed) {
    const rule =
      plan === 'every-container'
        ? 'Every container is sampled (EU GMP Annex 8 para 2)'
        : `The reduced plan samples at least ${needed} of ${containers.length} containers (${SAMPLING_PLAN_LABELS[plan]})`;
    throw new AppError(
      422,
      'TOO_FEW_SAMPLED',
      `${rule}; the record names ${ids.length}. Sample the other containers and record them.`,
    );
  }
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'sampled',
    entityType: 'lot',
    entityId: lotId,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    if (await trx('sampling_record').where({ lot_id: lotId }).forUpdate().first('id'))
      throw conflict(`Lot ${lot.lot_number} has been sampled already.`);
    const labels = ids.map((id) => byId.get(id)!.label).sort();
    const content = {
      lot: lot.lot_number,
      lineClearanceId: clearance.id,
      area: clearance.area,
      sampledAt: sampledAt.toISOString(),
      tool: input.tool,
      plan,
      containers: labels,
      reserve: input.reserve,
    };
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'sampled',
      entityType: 'lot',
      entityId: lotId,
      content,
      statement: input.note ?? null,
      ip,
    });
    const [recordId] = await trx('sampling_record').insert({
      lot_id: lotId,
      line_clearance_id: clearance.id,
      area: clearance.area,
      sampled_at: sampledAt,
      tool: input.tool,
      reserve_quantity: String(input.reserve.quantity), // a DECIMAL column: the driver sends a number as this text too
      reserve_unit: input.reserve.unit,
      reserve_location: input.reserve.location,
      note: input.note ?? null,
      sampling_plan: plan,
      signature_id: sig.id,
      sampler_id: user.id,
      created_at: new Date(),
    });
    await trx('sampled_container').insert(
      input.containers.map((c) => ({
        sampling_record_id: recordId,
        container_id: c.containerId,
        opened: true,
        sampled: true,
        resealed: true,
        note: c.note ?? null,
      })),
    );
    await setContainerStatus(trx, {
      lotId,
      containerIds: ids,
      status: 'sampled',
      reason: `Sampled under ${plan === 'every-container' ? 'the every-container plan' : 'the validated reduced plan'}`,
      signatureId: sig.id,
      userId: user.id,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'lot.sampled',
      entityType: 'lot',
      entityId: lotId,
      after: { ...content, samplingRecordId: recordId, notSampled: containers.length - ids.length },
      reason: input.note ?? null,
      ip,
    });
  });
  return samplingView(db, lotId);
}
