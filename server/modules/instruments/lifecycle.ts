/**
 * Instrument lifecycle (issue 15, item 4): qualification records, the maintenance log, and
 * out-of-service / back-in-service.
 *
 * Rules decided here:
 * - A qualification record (IQ, OQ, PQ or requalification: document reference, dates, status,
 *   next due date, summary) is entered by QA and signed in the same step (meaning
 *   "qualification-approved"; the signature's subject is the instrument, its content the record).
 *   Records are append-only: a correction is a new record.
 * - Maintenance entries are written by operators or QA, append-only, audited.
 * - Anyone who works at the bench (operator, verifier, QA) takes an instrument out of service
 *   with a reason; only QA puts it back, with a reason and an e-signature (meaning
 *   "back-in-service"). Checks performed before the return no longer count (repo.validCheckOf):
 *   the instrument is "check due" until every required check passes again.
 */
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import { checkSignatureCredentials, recordSignature, toSignatureRecord } from '../../lib/esign';
import { conflict, notFound } from '../../lib/errors';
import { oneOf } from '../../lib/db';
import type { Actor } from '../../lib/audit';
import type { AuthUser } from '../../lib/http';
import {
  MAINTENANCE_KINDS,
  QUALIFICATION_STAGES,
  QUALIFICATION_STATUSES,
  type MaintenanceEntry,
  type MaintenanceInput,
  type Qualification,
  type QualificationInput,
  type ServiceEvent,
} from './contract';
import type {
  InstrumentMaintenanceRow,
  InstrumentQualificationRow,
  InstrumentServiceEventRow,
} from '../../lib/db-tables';
import * as repo from './repo';
import { transactionWithRetry } from '../../lib/retry';

const dateOnly = (d: Date | string | null): string | null =>
  d === null ? null : typeof d === 'string' ? d.slice(0, 10) : new Date(d).toISOString().slice(0, 10);

/** The content QA signs for a qualification record (rebuilt by the integrity sweep). */
export function qualificationSignedContent(instrumentId: number, q: Omit<QualificationInput, 'signature'>) {
  return {
    instrumentId,
    stage: q.stage,
    documentRef: q.documentRef,
    executedFrom: q.executedFrom,
    executedTo: q.executedTo,
    status: q.status,
    nextDue: q.nextDue ?? null,
    summary: q.summary,
  };
}

/** The content QA signs when putting an instrument back into service. */
export function backInServiceSignedContent(instrumentId: number, reason: string) {
  return { instrumentId, state: 'in-service', reason };
}

async function mustFind(db: Knex | Knex.Transaction, id: number) {
  const i = await repo.findInstrument(db, id);
  if (!i) throw notFound('The instrument');
  return i;
}

export async function recordQualification(
  db: Knex,
  user: AuthUser,
  instrumentId: number,
  input: QualificationInput,
  ip: string | null,
): Promise<void> {
  await mustFind(db, instrumentId);
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'qualification-approved',
    entityType: 'instrument',
    entityId: instrumentId,
    ip,
  });
  const content = qualificationSignedContent(instrumentId, input);
  await transactionWithRetry(db, async (trx) => {
    await trx('instrument').where({ id: instrumentId }).forUpdate().first();
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'qualification-approved',
      entityType: 'instrument',
      entityId: instrumentId,
      content,
      statement: input.summary,
      ip,
    });
    const [id] = await trx('instrument_qualification').insert({
      instrument_id: instrumentId,
      stage: input.stage,
      document_ref: input.documentRef,
      executed_from: input.executedFrom,
      executed_to: input.executedTo,
      status: input.status,
      next_due: input.nextDue ?? null,
      summary: input.summary,
      signature_id: sig.id,
      recorded_by: user.id,
      recorded_at: new Date(),
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'instrument.qualification-recorded',
      entityType: 'instrument_qualification',
      entityId: id,
      after: { ...content, signatureId: sig.id },
      ip,
    });
  });
}

export async function recordMaintenance(
  db: Knex,
  actor: Actor,
  instrumentId: number,
  input: MaintenanceInput,
  ip: string | null,
): Promise<void> {
  await mustFind(db, instrumentId);
  await transactionWithRetry(db, async (trx) => {
    const [id] = await trx('instrument_maintenance').insert({
      instrument_id: instrumentId,
      kind: input.kind,
      performed_on: input.performedOn,
      performed_by_text: input.performedBy,
      description: input.description,
      recorded_by: actor.id!,
      recorded_at: new Date(),
    });
    await appendAudit(trx, {
      actor,
      action: 'instrument.maintenance-recorded',
      entityType: 'instrument_maintenance',
      entityId: id,
      after: { instrumentId, ...input },
      ip,
    });
  });
}

export async function takeOutOfService(
  db: Knex,
  actor: Actor,
  instrumentId: number,
  reason: string,
  ip: string | null,
): Promise<void> {
  await transactionWithRetry(db, async (trx) => {
    await trx('instrument').where({ id: instrumentId }).forUpdate().first();
    const inst = await mustFind(trx, instrumentId);
    if (inst.service_state === 'out-of-service') throw conflict(`Instrument ${inst.name} is already out of service.`);
    const now = new Date();
    await trx('instrument').where({ id: instrumentId }).update({ service_state: 'out-of-service', updated_at: now });
    const [id] = await trx('instrument_service_event').insert({
      instrument_id: instrumentId,
      state: 'out-of-service',
      reason,
      signature_id: null,
      recorded_by: actor.id!,
      recorded_at: now,
    });
    await appendAudit(trx, {
      actor,
      action: 'instrument.out-of-service',
      entityType: 'instrument',
      entityId: instrumentId,
      before: { serviceState: 'in-service' },
      after: { serviceState: 'out-of-service', serviceEventId: id },
      reason,
      ip,
    });
  });
}

export async function putBackInService(
  db: Knex,
  user: AuthUser,
  instrumentId: number,
  input: { reason: string; signature: { password: string; username?: string } },
  ip: string | null,
): Promise<void> {
  const inst = await mustFind(db, instrumentId);
  if (inst.service_state !== 'out-of-service') throw conflict(`Instrument ${inst.name} is in service.`);
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'back-in-service',
    entityType: 'instrument',
    entityId: instrumentId,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    const row = await trx('instrument').where({ id: instrumentId }).forUpdate().first();
    if (!row) throw notFound('The instrument');
    if (row.service_state !== 'out-of-service') throw conflict(`Instrument ${inst.name} is in service.`);
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'back-in-service',
      entityType: 'instrument',
      entityId: instrumentId,
      content: backInServiceSignedContent(instrumentId, input.reason),
      statement: input.reason,
      ip,
    });
    const now = new Date();
    await trx('instrument').where({ id: instrumentId }).update({ service_state: 'in-service', updated_at: now });
    const [id] = await trx('instrument_service_event').insert({
      instrument_id: instrumentId,
      state: 'in-service',
      reason: input.reason,
      signature_id: sig.id,
      recorded_by: user.id,
      recorded_at: now,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'instrument.back-in-service',
      entityType: 'instrument',
      entityId: instrumentId,
      before: { serviceState: 'out-of-service' },
      after: { serviceState: 'in-service', serviceEventId: id, signatureId: sig.id },
      reason: input.reason,
      ip,
    });
  });
}

/** Qualification records, maintenance log and service events of an instrument, newest first. */
export async function lifecycleOf(
  db: Knex,
  instrumentId: number,
): Promise<{ qualifications: Qualification[]; maintenance: MaintenanceEntry[]; serviceEvents: ServiceEvent[] }> {
  const quals = await db('instrument_qualification as q')
    .leftJoin('app_user as u', 'u.id', 'q.recorded_by')
    .where('q.instrument_id', instrumentId)
    .orderBy('q.id', 'desc')
    .select<(InstrumentQualificationRow & { full_name: string | null })[]>('q.*', 'u.full_name');
  const maint = await db('instrument_maintenance as m')
    .leftJoin('app_user as u', 'u.id', 'm.recorded_by')
    .where('m.instrument_id', instrumentId)
    .orderBy('m.id', 'desc')
    .select<(InstrumentMaintenanceRow & { full_name: string | null })[]>('m.*', 'u.full_name');
  const events = await db('instrument_service_event as e')
    .leftJoin('app_user as u', 'u.id', 'e.recorded_by')
    .where('e.instrument_id', instrumentId)
    .orderBy('e.id', 'desc')
    .select<(InstrumentServiceEventRow & { full_name: string | null })[]>('e.*', 'u.full_name');
  const sigIds = [...quals.map((q) => q.signature_id), ...events.map((e) => e.signature_id)].filter(
    (x): x is number => !!x,
  );
  // A plain copy of each row: toSignatureRecord (server/lib/esign.ts) takes a record of columns.
  const sigs = sigIds.length
    ? (await db('e_signature').whereIn('id', sigIds)).map((s) => toSignatureRecord({ ...s }))
    : [];
  const sig = (id: number | null) => sigs.find((s) => s.id === id) ?? null;
  return {
    qualifications: quals.map((q) => ({
      id: q.id,
      instrumentId: q.instrument_id,
      stage: oneOf(QUALIFICATION_STAGES, q.stage, 'qualification stage'),
      documentRef: q.document_ref,
      executedFrom: dateOnly(q.executed_from)!,
      executedTo: dateOnly(q.executed_to)!,
      status: oneOf(QUALIFICATION_STATUSES, q.status, 'qualification status'),
      nextDue: dateOnly(q.next_due),
      summary: q.summary,
      recordedBy: q.recorded_by,
      recordedByName: q.full_name ?? null,
      recordedAt: repo.iso(q.recorded_at)!,
      signature: sig(q.signature_id),
    })),
    maintenance: maint.map((m) => ({
      id: m.id,
      instrumentId: m.instrument_id,
      kind: oneOf(MAINTENANCE_KINDS, m.kind, 'maintenance kind'),
      performedOn: dateOnly(m.performed_on)!,
      performedBy: m.performed_by_text,
      description: m.description,
      recordedBy: m.recorded_by,
      recordedByName: m.full_name ?? null,
      recordedAt: repo.iso(m.recorded_at)!,
    })),
    serviceEvents: events.map((e) => ({
      id: e.id,
      instrumentId: e.instrument_id,
      state: oneOf(repo.SERVICE_STATES, e.state, 'service state'),
      reason: e.reason,
      recordedBy: e.recorded_by,
      recordedByName: e.full_name ?? null,
      recordedAt: repo.iso(e.recorded_at)!,
      signature: sig(e.signature_id),
    })),
  };
}
