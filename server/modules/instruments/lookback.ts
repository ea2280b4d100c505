/**
 * Failed-check look-back (issue 15, item 5).
 *
 * Rules decided here:
 * - When a check of any type fails, the same transaction opens an impact assessment listing
 *   every measurement made on that instrument after the last passing check of the same type and
 *   up to the failed check (all earlier measurements on the instrument when the type never
 *   passed). A measurement's time is the acquisition time its file states
 *   (measurement_provenance.acquired_at), else its upload time; `basis` records the rule.
 * - Every lot among those measurements gets a notice, and so does every certificate issued for a
 *   test holding one of them: a separate append-only record beside the certificate; the
 *   certificate itself never changes.
 * - QA closes the assessment once, with an e-signature (meaning "impact-assessed"): "none" (no
 *   impact, with a rationale) or "retest" naming containers, each of which must be among the
 *   listed measurements. The notices stay; the decision is shown beside them.
 */
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import { parseJson, type Db } from '../../lib/db';
import type {
  CheckImpactAssessmentRow,
  CheckImpactMeasurementRow,
  CheckImpactNoticeInsert,
  CheckImpactNoticeRow,
} from '../../lib/db-tables';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { conflict, notFound, unprocessable } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import {
  CHECK_TYPE_LABELS,
  type CheckType,
  type ImpactAssessment,
  type ImpactDecisionInput,
  type ImpactMeasurement,
  type ImpactNotice,
} from './contract';
import { checkTypeOf, iso } from './repo';
import { oneOf } from '../../lib/db';

const ASSESSMENT_STATUSES = ['open', 'assessed'] as const;
const DECISIONS = ['none', 'retest'] as const;
const BASES = ['acquisition-or-upload'] as const;
import { transactionWithRetry } from '../../lib/retry';

interface FailedCheck {
  id: number;
  instrumentId: number;
  checkType: CheckType;
  performedAt: Date;
}

/** The measurements on an instrument in (from, to]; from = null: everything up to `to`. */
export async function measurementsInWindow(
  db: Db,
  instrumentId: number,
  from: Date | null,
  to: Date,
): Promise<{ id: number; test_id: number; lot_id: number; container_id: number; created_at: Date }[]> {
  // The acquisition time the file states (measurement_provenance.acquired_at), else the upload time.
  const when = 'COALESCE(p.acquired_at, m.created_at)';
  const q = db('measurement as m')
    .join('identity_test as t', 't.id', 'm.test_id')
    .leftJoin('measurement_provenance as p', 'p.measurement_id', 'm.id')
    .where('m.instrument_id', instrumentId)
    .andWhereRaw(`${when} <= ?`, [to])
    .orderByRaw(`${when}, m.id`)
    .select<{ id: number; test_id: number; lot_id: number; container_id: number; created_at: Date }[]>(
      'm.id',
      'm.test_id',
      't.lot_id',
      'm.container_id',
      db.raw(`${when} as created_at`),
    );
  if (from) q.andWhereRaw(`${when} > ?`, [from]);
  return q;
}

/** Opens the assessment of a failed check, with its measurements and notices (inside the check's transaction). */
export async function openLookback(trx: Knex.Transaction, check: FailedCheck, actor: Actor, ip: string | null) {
  const lastPass = await trx('instrument_check')
    .where({ instrument_id: check.instrumentId, check_type: check.checkType, verdict: 'pass' })
    .andWhere('performed_at', '<', check.performedAt)
    .whereNot('id', check.id)
    .orderBy('performed_at', 'desc')
    .orderBy('id', 'desc')
    .first('id', 'performed_at');
  const from = lastPass ? new Date(lastPass.performed_at) : null;
  const rows = await measurementsInWindow(trx, check.instrumentId, from, check.performedAt);
  const now = new Date();
  const [assessmentId] = await trx('check_impact_assessment').insert({
    instrument_check_id: check.id,
    instrument_id: check.instrumentId,
    check_type: check.checkType,
    window_from: from,
    window_to: check.performedAt,
    basis: 'acquisition-or-upload',
    opened_at: now,
    status: 'open',
  });
  if (rows.length)
    await trx('check_impact_measurement').insert(
      rows.map((r) => ({
        assessment_id: assessmentId,
        measurement_id: r.id,
        test_id: r.test_id,
        lot_id: r.lot_id,
        container_id: r.container_id,
        measured_at: r.created_at,
      })),
    );
  const inst = await trx('instrument').where({ id: check.instrumentId }).first('name');
  const label = CHECK_TYPE_LABELS[check.checkType];
  const since = from ? `since its last passing check (${from.toISOString()})` : 'with no passing check before it';
  const lotIds = [...new Set(rows.map((r) => r.lot_id))];
  const testIds = [...new Set(rows.map((r) => r.test_id))];
  const certs: { id: number; lot_id: number; number: string }[] = testIds.length
    ? await trx('certificate').whereIn('test_id', testIds).select('id', 'lot_id', 'number')
    : [];
  const notices: CheckImpactNoticeInsert[] = [];
  for (const lotId of lotIds) {
    const n = rows.filter((r) => r.lot_id === lotId).length;
    const text =
      `The ${label} check of ${inst?.name ?? 'the instrument'} failed on ${check.performedAt.toISOString()}. ` +
      `${n} measurement${n === 1 ? '' : 's'} of this lot ${n === 1 ? 'was' : 'were'} made on it ${since}. ` +
      'QA assesses the impact (impact assessment ' +
      `${assessmentId}); until then the result rests on an instrument whose fitness is in doubt.`;
    notices.push({ assessment_id: assessmentId, lot_id: lotId, certificate_id: null, notice: text, created_at: now });
    for (const c of certs.filter((x) => x.lot_id === lotId))
      notices.push({
        assessment_id: assessmentId,
        lot_id: lotId,
        certificate_id: c.id,
        notice: `Certificate ${c.number}: ${text}`,
        created_at: now,
      });
  }
  if (notices.length) await trx('check_impact_notice').insert(notices);
  await appendAudit(trx, {
    actor,
    action: 'instrument.lookback-opened',
    entityType: 'check_impact_assessment',
    entityId: assessmentId,
    after: {
      instrumentCheckId: check.id,
      instrumentId: check.instrumentId,
      checkType: check.checkType,
      windowFrom: from?.toISOString() ?? null,
      windowTo: check.performedAt.toISOString(),
      basis: 'acquisition-or-upload',
      measurementIds: rows.map((r) => r.id),
      lotIds,
      certificateIds: certs.map((c) => c.id),
    },
    ip,
  });
  return assessmentId;
}

async function noticesOf(db: Db, where: { assessmentId?: number; lotId?: number }): Promise<ImpactNotice[]> {
  const q = db('check_impact_notice as n')
    .join('lot as l', 'l.id', 'n.lot_id')
    .join('check_impact_assessment as a', 'a.id', 'n.assessment_id')
    .leftJoin('certificate as c', 'c.id', 'n.certificate_id')
    .orderBy('n.id')
    .select<
      (CheckImpactNoticeRow &
        Pick<CheckImpactAssessmentRow, 'status' | 'decision'> & {
          lot_number: string;
          certificate_number: string | null;
        })[]
    >('n.*', 'l.lot_number', 'c.number as certificate_number', 'a.status', 'a.decision');
  if (where.assessmentId) q.where('n.assessment_id', where.assessmentId);
  if (where.lotId) q.where('n.lot_id', where.lotId);
  const rows = await q;
  return rows.map((r) => ({
    id: r.id,
    assessmentId: r.assessment_id,
    lotId: r.lot_id,
    lotNumber: r.lot_number,
    certificateId: r.certificate_id,
    certificateNumber: r.certificate_number,
    notice: r.notice,
    createdAt: iso(r.created_at)!,
    assessmentStatus: oneOf(ASSESSMENT_STATUSES, r.status, 'impact assessment status'),
    decision: r.decision === null ? null : oneOf(DECISIONS, r.decision, 'impact decision'),
  }));
}

/** The notices of a lot (and its certificates), oldest first. */
export const lotNotices = (db: Db, lotId: number) => noticesOf(db, { lotId });

export async function getAssessment(db: Knex, id: number): Promise<ImpactAssessment> {
  const a = await db('check_impact_assessment as a')
    .join('instrument as i', 'i.id', 'a.instrument_id')
    .leftJoin('app_user as u', 'u.id', 'a.assessed_by')
    .where('a.id', id)
    .first<(CheckImpactAssessmentRow & { instrument_name: string; assessed_by_name: string | null }) | undefined>(
      'a.*',
      'i.name as instrument_name',
      'u.full_name as assessed_by_name',
    );
  if (!a) throw notFound('The impact assessment');
  const ms = await db('check_impact_measurement as x')
    .join('measurement as m', 'm.id', 'x.measurement_id')
    .join('lot as l', 'l.id', 'x.lot_id')
    .join('container as c', 'c.id', 'x.container_id')
    .where('x.assessment_id', id)
    .orderBy('x.measured_at')
    .orderBy('x.measurement_id')
    .select<(CheckImpactMeasurementRow & { lot_number: string; label: string; verdict: string })[]>(
      'x.*',
      'l.lot_number',
      'c.label',
      'm.verdict',
    );
  const measurements: ImpactMeasurement[] = ms.map((r) => ({
    measurementId: r.measurement_id,
    testId: r.test_id,
    lotId: r.lot_id,
    lotNumber: r.lot_number,
    containerId: r.container_id,
    containerLabel: r.label,
    measuredAt: iso(r.measured_at)!,
    verdict: r.verdict,
  }));
  return {
    id: a.id,
    instrumentCheckId: a.instrument_check_id,
    instrumentId: a.instrument_id,
    instrumentName: a.instrument_name,
    checkType: checkTypeOf(a.check_type),
    windowFrom: iso(a.window_from),
    windowTo: iso(a.window_to)!,
    basis: oneOf(BASES, a.basis, 'look-back basis'),
    openedAt: iso(a.opened_at)!,
    status: oneOf(ASSESSMENT_STATUSES, a.status, 'impact assessment status'),
    decision: a.decision === null ? null : oneOf(DECISIONS, a.decision, 'impact decision'),
    retestContainerIds: parseJson<number[]>(a.retest_containers, []),
    rationale: a.rationale ?? null,
    assessedBy: a.assessed_by ?? null,
    assessedByName: a.assessed_by_name ?? null,
    assessedAt: iso(a.assessed_at),
    signature: (await signaturesFor(db, 'check_impact_assessment', id))[0] ?? null,
    measurements,
    notices: await noticesOf(db, { assessmentId: id }),
  };
}

export async function listAssessments(db: Knex, status?: 'open' | 'assessed'): Promise<ImpactAssessment[]> {
  const q = db('check_impact_assessment').orderBy('id', 'desc').limit(200).select('id');
  if (status) q.where({ status });
  const ids = await q;
  const out: ImpactAssessment[] = [];
  for (const r of ids) out.push(await getAssessment(db, r.id));
  return out;
}

/** The content QA signs when closing an assessment. */
export function assessmentSignedContent(a: {
  id: number;
  instrumentCheckId: number;
  measurementIds: number[];
  decision: string;
  retestContainerIds: number[];
  rationale: string;
}) {
  return {
    assessmentId: a.id,
    instrumentCheckId: a.instrumentCheckId,
    measurementIds: a.measurementIds,
    decision: a.decision,
    retestContainerIds: a.retestContainerIds,
    rationale: a.rationale,
  };
}

export async function decideAssessment(
  db: Knex,
  user: AuthUser,
  id: number,
  input: ImpactDecisionInput,
  ip: string | null,
): Promise<ImpactAssessment> {
  const before = await getAssessment(db, id);
  if (before.status !== 'open') throw conflict('This impact assessment is already closed; its decision stands.');
  const listed = new Set(before.measurements.map((m) => m.containerId));
  const retest = [...new Set(input.retestContainerIds)].sort((a, b) => a - b);
  const stray = retest.filter((c) => !listed.has(c));
  if (stray.length)
    throw unprocessable(
      'NOT_AFFECTED',
      'Only containers measured on the instrument in the look-back window can be named for retest.',
      { containerIds: stray },
    );
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'impact-assessed',
    entityType: 'check_impact_assessment',
    entityId: id,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    const row = await trx('check_impact_assessment').where({ id }).forUpdate().first();
    if (!row) throw notFound('The impact assessment');
    if (row.status !== 'open') throw conflict('This impact assessment is already closed; its decision stands.');
    const now = new Date();
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'impact-assessed',
      entityType: 'check_impact_assessment',
      entityId: id,
      content: assessmentSignedContent({
        id,
        instrumentCheckId: before.instrumentCheckId,
        measurementIds: before.measurements.map((m) => m.measurementId),
        decision: input.decision,
        retestContainerIds: retest,
        rationale: input.rationale,
      }),
      statement: input.rationale,
      ip,
    });
    await trx('check_impact_assessment')
      .where({ id })
      .update({
        status: 'assessed',
        decision: input.decision,
        retest_containers: JSON.stringify(retest),
        rationale: input.rationale,
        assessed_by: user.id,
        assessed_at: now,
        signature_id: sig.id,
      });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'instrument.lookback-assessed',
      entityType: 'check_impact_assessment',
      entityId: id,
      before: { status: 'open' },
      after: { status: 'assessed', decision: input.decision, retestContainerIds: retest, signatureId: sig.id },
      reason: input.rationale,
      ip,
    });
  });
  return getAssessment(db, id);
}
