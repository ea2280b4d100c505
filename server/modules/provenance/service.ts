/**
 * Write paths of provenance (docs/provenance.md): handing an attempt over to another operator
 * (recorded and audited), and QA's signed release of a container blocked after too many
 * invalid measurements.
 */
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import { checkSignatureCredentials, recordSignature } from '../../lib/esign';
import { conflict, forbidden, notFound, unprocessable } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { must, parseJson } from '../../lib/db';
import type {
  BlockedContainer,
  HandOverInput,
  OperatorChoice,
  MeasurementProvenance,
  ReleaseBlockInput,
  ReviewMeasurementEntry,
} from './contract';
import { blockState, holderOf } from './rules';
import { transactionWithRetry } from '../../lib/retry';
import { loadConfig } from '../../lib/config';
import { FROM_EXPORT_FOLDER } from '../intake/contract';
import { clockWarning } from '../../lib/clock-offset';

/** Active operators an attempt can be handed over to (everyone but its holder). */
export async function handOverCandidates(db: Knex, testId: number): Promise<OperatorChoice[]> {
  const t = await db('identity_test').where({ id: testId }).first('id', 'created_by');
  if (!t) throw notFound('The identity test');
  const holder = await holderOf(db, t);
  const users = await db('app_user').where({ active: 1 }).select('id', 'full_name', 'roles').orderBy('full_name');
  return users
    .filter((u) => parseJson<string[]>(u.roles, []).includes('operator') && u.id !== holder)
    .map((u) => ({ id: u.id, name: u.full_name }));
}

/**
 * Hands an attempt in progress over to another operator, who may then add its measurements. The
 * holder hands it over; a QA manager may too (the holder is absent). Recorded and audited.
 */
export async function handOver(db: Knex, user: AuthUser, testId: number, input: HandOverInput, ip: string | null) {
  await transactionWithRetry(db, async (trx) => {
    const t = await trx('identity_test').where({ id: testId }).forUpdate().first();
    if (!t) throw notFound('The identity test');
    if (t.status !== 'in-progress')
      throw conflict(`Attempt ${t.attempt} is ${t.status}; only an attempt in progress can be handed over.`);
    const holder = await holderOf(trx, t);
    if (holder !== user.id && !user.roles.includes('qa_manager'))
      throw forbidden(
        'Only the operator who holds this attempt (or a QA manager) can hand it over. Nothing was recorded.',
      );
    if (input.toUserId === holder)
      throw unprocessable('HANDOVER_TO_HOLDER', 'This operator already holds the attempt.');
    const to = await trx('app_user').where({ id: input.toUserId, active: 1 }).first('id', 'full_name', 'roles');
    if (!to || !parseJson<string[]>(to.roles, []).includes('operator'))
      throw unprocessable(
        'HANDOVER_NOT_OPERATOR',
        'An attempt can only be handed over to an active account with the operator role. Nothing was recorded.',
      );
    const now = new Date();
    const [id] = await trx('test_handover').insert({
      test_id: testId,
      from_user: holder,
      to_user: to.id,
      reason: input.reason,
      created_by: user.id,
      created_at: now,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'test.handed-over',
      entityType: 'identity_test',
      entityId: testId,
      before: { holder },
      after: { holder: to.id, holderName: to.full_name, handoverId: id },
      reason: input.reason,
      ip,
    });
  });
}

export function releaseSignedContent(c: { label: string; blockId: number; invalidCount: number; reason: string }) {
  return {
    container: c.label,
    block: c.blockId,
    invalidMeasurements: c.invalidCount,
    decision: 'release',
    reason: c.reason,
  };
}

/** Containers blocked now (QA's work queue), oldest first. */
export async function blockedContainers(db: Knex): Promise<BlockedContainer[]> {
  const latest = db('container_block').max('id as id').groupBy('container_id');
  const rows = await db('container_block as b')
    .whereIn('b.id', latest)
    .where('b.event', 'blocked')
    .join('container as c', 'c.id', 'b.container_id')
    .join('lot as l', 'l.id', 'c.lot_id')
    .select(
      'b.id',
      'b.container_id',
      'b.test_id',
      'b.invalid_count',
      'b.created_at',
      'c.label',
      'l.lot_number',
      'l.id as lot_id',
    )
    .orderBy('b.id');
  return rows.map((r) => ({
    blockId: r.id,
    containerId: r.container_id,
    label: r.label,
    lotId: r.lot_id,
    lotNumber: r.lot_number,
    testId: r.test_id,
    invalidCount: r.invalid_count,
    blockedAt: new Date(r.created_at).toISOString(),
  }));
}

/**
 * Records the end of a hold as a container status change in the caller's transaction: the lot and
 * container state machine's `recordHoldChange` (server/modules/lots/state.ts), handed in by the
 * caller so that provenance imports no lot code (the lots module reaches provenance through
 * library and testing; docs/architecture.md, "Direction of imports").
 */
export type HoldChangeWriter = (
  trx: Knex.Transaction,
  r: {
    lotId: number;
    containerId: number;
    held: boolean;
    reason: string;
    signatureId?: number | null;
    userId: number | null;
  },
) => Promise<void>;

/** QA releases a blocked container for further measurements, with a reason and an e-signature. */
export async function releaseBlock(
  db: Knex,
  user: AuthUser,
  containerId: number,
  input: ReleaseBlockInput,
  ip: string | null,
  recordHoldChange: HoldChangeWriter,
) {
  const c = await db('container').where({ id: containerId }).first('id', 'label', 'lot_id');
  if (!c) throw notFound('The container');
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'block-released',
    entityType: 'container_block',
    entityId: containerId,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    await trx('container').where({ id: containerId }).forUpdate().first('id');
    const state = await blockState(trx, containerId);
    if (!state.blocked) throw conflict(`Container ${c.label} is not blocked.`);
    // blockState has just read this event of the container
    const lastEvent = await trx('container_block').where({ id: state.lastEventId! }).first();
    const block = must(lastEvent, `Container block event ${state.lastEventId}`);
    const now = new Date();
    const [id] = await trx('container_block').insert({
      container_id: containerId,
      test_id: block.test_id,
      event: 'released',
      invalid_count: block.invalid_count,
      reason: input.reason,
      signature_id: null,
      created_by: user.id,
      created_at: now,
    });
    const content = releaseSignedContent({
      label: c.label,
      blockId: block.id,
      invalidCount: block.invalid_count,
      reason: input.reason,
    });
    const signed = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'block-released',
      entityType: 'container_block',
      entityId: id,
      content,
      statement: input.reason,
      ip,
    });
    // back to the status before the block, unless an investigation still holds it (server/modules/lots/state.ts)
    await recordHoldChange(trx, {
      lotId: c.lot_id,
      containerId,
      held: false,
      reason: `Block released by QA: ${input.reason}`.slice(0, 2000),
      signatureId: signed.id,
      userId: user.id,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'container.block-released',
      entityType: 'container',
      entityId: containerId,
      before: { blocked: true, invalidMeasurements: block.invalid_count },
      after: { blocked: false, releaseId: id },
      reason: input.reason,
      ip,
    });
  });
}

/**
 * Every measurement of an attempt in the order it was recorded, for the verifier's review: who,
 * when, the verdict, whether a later measurement of the same container replaced it, why it was
 * measured again, and what the file states about its acquisition ("not stated in the file").
 */
export async function measurementHistory(db: Knex, testId: number): Promise<ReviewMeasurementEntry[]> {
  const rows = await db('measurement as ms')
    .join('container as c', 'c.id', 'ms.container_id')
    .join('app_user as u', 'u.id', 'ms.created_by')
    .join('stored_file as f', 'f.id', 'ms.file_id')
    .leftJoin('measurement_provenance as p', 'p.measurement_id', 'ms.id')
    .leftJoin('folder_acquisition_event as fe', 'fe.measurement_id', 'ms.id')
    .leftJoin('folder_acquisition as fa', 'fa.id', 'fe.acquisition_id')
    .leftJoin('instrument as fi', 'fi.id', 'fa.instrument_id')
    .where('ms.test_id', testId)
    .orderBy('ms.id')
    .select(
      'ms.id',
      'ms.container_id',
      'ms.verdict',
      'ms.match_score',
      'ms.created_at',
      'c.label',
      'u.full_name',
      'f.file_name',
      'f.sha256',
      'p.acquired_text',
      'p.acquired_at',
      'p.acquired_judgement',
      'p.instrument_text',
      'p.stated_serial',
      'p.serial_judgement',
      'p.title',
      'p.sample_text',
      'p.identifier_findings',
      'p.identifiers_confirmed',
      'p.remeasure_reason',
      'p.remeasure_of_measurement_id',
      'fe.event as folder_event',
      'fe.acquisition_id',
      'fa.received_at as folder_received_at',
      'fa.clock_offset_seconds',
      'fi.name as folder_instrument',
    );
  const tolerance = loadConfig().clockToleranceMinutes;
  const latest = new Map<number, number>();
  for (const r of rows) latest.set(r.container_id, r.id);
  return rows.map((r) => ({
    id: r.id,
    containerId: r.container_id,
    label: r.label,
    verdict: r.verdict,
    matchScore: r.match_score === null ? null : Number(r.match_score),
    state: latest.get(r.container_id) === r.id ? 'current' : 'superseded',
    measuredBy: r.full_name,
    measuredAt: new Date(r.created_at).toISOString(),
    file: { name: r.file_name, sha256: r.sha256 },
    provenance: {
      acquiredText: r.acquired_text ?? null,
      acquiredAt: r.acquired_at ? new Date(r.acquired_at).toISOString() : null,
      acquiredJudgement: r.acquired_judgement ?? 'not-recorded',
      instrumentText: r.instrument_text ?? null,
      statedSerial: r.stated_serial ?? null,
      serialJudgement: r.serial_judgement ?? 'not-recorded',
      title: r.title ?? null,
      sampleText: r.sample_text ?? null,
      identifierFindings: parseJson(r.identifier_findings, []),
      identifiersConfirmed: !!r.identifiers_confirmed,
      remeasureReason: r.remeasure_reason ?? null,
      remeasureOf: r.remeasure_of_measurement_id ?? null,
      ...sourceOf(r, tolerance),
    },
  }));
}

/** Where the measurement's file came from: a manual upload, or the instrument's export folder (docs/instrument-intake.md). */
function sourceOf(
  r: {
    folder_event?: string | null;
    acquisition_id?: number | null;
    folder_received_at?: Date | null;
    clock_offset_seconds?: number | null;
    folder_instrument?: string | null;
  },
  toleranceMinutes: number,
): Pick<MeasurementProvenance, 'source' | 'sourceText' | 'acquisitionId' | 'clockOffsetSeconds' | 'clockWarning'> {
  if (!r.folder_event)
    return {
      source: 'manual-upload',
      sourceText: 'uploaded by hand',
      acquisitionId: null,
      clockOffsetSeconds: null,
      clockWarning: null,
    };
  const offset =
    r.clock_offset_seconds === null || r.clock_offset_seconds === undefined ? null : Number(r.clock_offset_seconds);
  return {
    source: 'export-folder',
    sourceText: `${FROM_EXPORT_FOLDER} (${r.folder_instrument}, received ${new Date(r.folder_received_at!).toISOString().replace('T', ' ').slice(0, 19)} UTC${r.folder_event === 'assigned' ? '; assigned to the container by the operator' : '; attached by its label'})`,
    acquisitionId: r.acquisition_id ?? null,
    clockOffsetSeconds: offset,
    clockWarning: clockWarning(offset, toleranceMinutes),
  };
}
