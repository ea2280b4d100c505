/**
 * Investigations of failing identity results, after FDA guidance on out-of-specification
 * results (Oct 2006, Rev. 1 May 2022): an investigation opens automatically when a verified
 * test has a failing container; QA records the phase I laboratory check (instrument, sample
 * handling, method, data), then EITHER invalidates the result for a documented, assignable
 * laboratory error and authorises a re-sample and retest of named containers (the original
 * results stay on record, 21 CFR 211.192 and 211.194), OR confirms the failure and rejects the
 * lot. Each step is an e-signature and an audit event; mail tells QA when one opens and closes.
 * There is no other way to retest a failed container: see testing/service.ts.
 */
import { transactionWithRetry } from '../../lib/retry';
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { must } from '../../lib/db';
import { AppError, conflict, forbidden, notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import type { SignatureInput, SignatureMeaning, SignatureRecord } from '../../lib/contract';
import { enqueueMailToRole } from '../../lib/mail';
import { pageLink } from '../../lib/links';
import { insertWithNextNumber, yearOf } from '../../lib/numbering';
import * as repo from './repo';
import { moveLot, setContainerStatus } from '../lots';
import type {
  ConcludeInput,
  ConfirmInput,
  FailingContainer,
  InvalidateInput,
  InvestigationDetail,
  InvestigationSummary,
  OpenFromSignalInput,
  Phase1Input,
  Phase1Record,
  TrendSubject,
} from './contract';
import { METRIC_LABELS, TREND_CAUTION } from '../trending/contract';
import * as trendRepo from '../trending';
import { PHASE1_ITEMS, PHASE1_LABELS } from './contract';

export interface OpenInput {
  lot: { id: number; lotNumber: string; materialName: string };
  test: { id: number; attempt: number };
  failing: FailingContainer[];
  actor: Actor;
  ip: string | null;
}

/** Opens an investigation inside the caller's transaction (the verification that found the failure). */
export async function openInvestigation(
  trx: Knex.Transaction,
  input: OpenInput,
): Promise<{ id: number; number: string }> {
  const now = new Date();
  const created = await insertWithNextNumber(trx, {
    table: 'investigation',
    column: 'number',
    prefix: `INV-${yearOf(now)}-`,
    width: 4,
    row: (number) => ({
      number,
      lot_id: input.lot.id,
      test_id: input.test.id,
      status: 'open',
      failing: JSON.stringify(input.failing),
      phase1: null,
      decision: null,
      justification: null,
      retest_containers: null,
      opened_by: input.actor.id,
      opened_at: now,
      decided_by: null,
      decision_signature_id: null,
      closed_at: null,
      updated_at: now,
    }),
  });
  // The investigation holds the failing containers (issue 14 item 4).
  await setContainerStatus(trx, {
    lotId: input.lot.id,
    containerIds: input.failing.map((f) => f.containerId),
    status: 'blocked',
    reason: `Held by investigation ${created.number}`,
    userId: input.actor.id,
    onlyWhereAllowed: true,
  });
  await appendAudit(trx, {
    actor: input.actor,
    action: 'investigation.opened',
    entityType: 'investigation',
    entityId: created.id,
    after: {
      number: created.number,
      lotId: input.lot.id,
      testId: input.test.id,
      failing: input.failing.map((f) => ({ label: f.label, measurementId: f.measurementId, hint: f.hintText })),
    },
    reason: `Verified identity test of lot ${input.lot.lotNumber} has failing containers.`,
    ip: input.ip,
  });
  const lines = input.failing.map((f) => `- ${f.label}: ${f.explanation[0] ?? 'failed'} ${f.hintText}`);
  await enqueueMailToRole(
    trx,
    'qa_manager',
    `Investigation ${created.number} opened: lot ${input.lot.lotNumber} failed identity`,
    [
      `Lot ${input.lot.lotNumber} (${input.lot.materialName}) failed the identity test (attempt ${input.test.attempt}).`,
      `The lot stays in quarantine. Failing containers:`,
      ...lines,
      '',
      `Record the phase I laboratory check and decide: ${pageLink(`/investigations/${created.id}`)}`,
    ].join('\n'),
  );
  return created;
}

/** Closes an investigation whose authorised retest has now been verified (passed or failed again). */
export async function closeAfterRetest(
  trx: Knex.Transaction,
  investigationId: number,
  outcome: { passed: boolean; testId: number; attempt: number; lotNumber: string; nextInvestigation?: string },
  actor: Actor,
  ip: string | null,
): Promise<void> {
  const row = await repo.lockInvestigation(trx, investigationId);
  if (!row || row.status !== 'retest-authorised') return;
  const now = new Date();
  await trx('investigation')
    .where({ id: investigationId })
    .update({ status: 'closed', closed_at: now, updated_at: now });
  const result = outcome.passed
    ? `the retest (attempt ${outcome.attempt}) passed and was verified`
    : `the retest (attempt ${outcome.attempt}) failed again; investigation ${outcome.nextInvestigation ?? ''} follows it`;
  await appendAudit(trx, {
    actor,
    action: 'investigation.closed',
    entityType: 'investigation',
    entityId: investigationId,
    before: { status: row.status },
    after: { status: 'closed', retestTestId: outcome.testId, retestPassed: outcome.passed },
    reason: `Closed because ${result}.`,
    ip,
  });
  await enqueueMailToRole(
    trx,
    'qa_manager',
    `Investigation ${row.number} closed: lot ${outcome.lotNumber} retest ${outcome.passed ? 'passed' : 'failed'}`,
    `Investigation ${row.number} of lot ${outcome.lotNumber} is closed: ${result}.\n${pageLink(`/investigations/${investigationId}`)}`,
  );
}

export async function getInvestigation(db: Knex, id: number): Promise<InvestigationDetail> {
  const inv = await repo.findInvestigation(db, id);
  if (!inv) throw notFound('The investigation');
  const signatures = await signaturesFor(db, 'investigation', id);
  const test = inv.testId === null ? undefined : await db('identity_test').where({ id: inv.testId }).first();
  return { ...inv, signatures, performedBy: test?.performed_by ?? null };
}

/** QA's independence from the laboratory work under investigation. */
async function assertNotAnalyst(
  db: Knex | Knex.Transaction,
  user: AuthUser,
  inv: Pick<InvestigationSummary, 'kind' | 'testId' | 'trend'>,
): Promise<void> {
  if (inv.kind === 'trend') {
    const ids = (inv.trend?.measurements ?? []).map((m) => m.measurementId);
    const measured = ids.length
      ? await db('measurement').whereIn('id', ids).where({ created_by: user.id }).first('id')
      : undefined;
    if (measured)
      throw forbidden(
        'You recorded measurements of this trend signal, so you cannot decide its investigation. Another QA manager must do it.',
      );
    return;
  }
  if (inv.testId === null) return; // only a trend investigation has no test (db/migrations/155_trend_investigation.ts)
  const t = await db('identity_test').where({ id: inv.testId }).first();
  const measured = await db('measurement').where({ test_id: inv.testId, created_by: user.id }).first();
  if (t?.performed_by === user.id || measured)
    throw forbidden(
      'You performed or measured this test, so you cannot decide its investigation. Another QA manager must do it.',
    );
}

/**
 * One signed step of an investigation: the signer measured nothing of what it looks into, the
 * credentials are checked before any write, then in one transaction the investigation is locked
 * and must still be in `from` (another QA manager may have decided it meanwhile: `stale`), the
 * e-signature is recorded over `content`, and `apply` writes the step and its audit event.
 */
async function signedStep(
  db: Knex,
  user: AuthUser,
  inv: InvestigationSummary,
  step: {
    meaning: SignatureMeaning;
    signature: SignatureInput;
    from: InvestigationSummary['status'];
    stale: string;
    content: unknown;
    statement: string;
    ip: string | null;
  },
  apply: (trx: Knex.Transaction, sig: SignatureRecord, actor: Actor) => Promise<void>,
): Promise<InvestigationDetail> {
  await assertNotAnalyst(db, user, inv);
  const signing = {
    user,
    credentials: step.signature,
    meaning: step.meaning,
    entityType: 'investigation',
    entityId: inv.id,
    ip: step.ip,
  };
  await checkSignatureCredentials(db, signing);
  await transactionWithRetry(db, async (trx) => {
    const row = await repo.lockInvestigation(trx, inv.id);
    if (!row || row.status !== step.from) throw conflict(step.stale);
    const sig = await recordSignature(trx, { ...signing, content: step.content, statement: step.statement });
    await apply(trx, sig, { id: user.id, name: user.fullName });
  });
  return getInvestigation(db, inv.id);
}

/** Closes an investigation with its signed decision; returns the time it closed. */
async function closeInvestigation(
  trx: Knex.Transaction,
  id: number,
  d: { decision: 'confirmed' | 'concluded'; justification: string; userId: number; signatureId: number },
): Promise<Date> {
  const now = new Date();
  await trx('investigation').where({ id }).update({
    status: 'closed',
    decision: d.decision,
    justification: d.justification,
    decided_by: d.userId,
    decision_signature_id: d.signatureId,
    closed_at: now,
    updated_at: now,
  });
  return now;
}

/** A trend investigation neither invalidates a result nor rejects a lot: it is concluded. */
function assertFailureKind(inv: InvestigationSummary): void {
  if (inv.kind === 'trend')
    throw conflict(
      `Investigation ${inv.number} looks into a trend signal, not a failing result: it never invalidates a result or rejects a lot. Record its conclusion instead.`,
    );
}

export async function recordPhase1(
  db: Knex,
  user: AuthUser,
  id: number,
  input: Phase1Input,
  ip: string | null,
): Promise<InvestigationDetail> {
  const inv = await repo.findInvestigation(db, id);
  if (!inv) throw notFound('The investigation');
  const stale = `The phase I laboratory check of ${inv.number} is already recorded.`;
  if (inv.status !== 'open') throw conflict(stale);
  const items = Object.fromEntries(
    PHASE1_ITEMS.map((k) => [k, { ok: input[k].ok, note: input[k].note }]),
  ) as Phase1Record['items'];
  const content = { investigation: inv.number, items, summary: input.summary };
  const step = {
    meaning: 'phase-1-recorded' as const,
    signature: input.signature,
    from: 'open' as const,
    stale,
    content,
    statement: input.summary,
    ip,
  };
  return signedStep(db, user, inv, step, async (trx, sig, actor) => {
    const record: Phase1Record = {
      items,
      summary: input.summary,
      recordedBy: { id: user.id, name: user.fullName },
      recordedAt: sig.signedAt,
      signatureId: sig.id,
    };
    await trx('investigation')
      .where({ id })
      .update({ phase1: JSON.stringify(record), status: 'phase1-recorded', updated_at: new Date() });
    await appendAudit(trx, {
      actor,
      action: 'investigation.phase1-recorded',
      entityType: 'investigation',
      entityId: id,
      before: { status: 'open', phase1: null },
      after: { status: 'phase1-recorded', phase1: record },
      reason: input.summary,
      ip,
    });
  });
}

export async function invalidateResult(
  db: Knex,
  user: AuthUser,
  id: number,
  input: InvalidateInput,
  ip: string | null,
): Promise<InvestigationDetail> {
  const inv = await repo.findInvestigation(db, id);
  if (!inv) throw notFound('The investigation');
  assertFailureKind(inv);
  if (inv.status === 'open') throw conflict('Record the phase I laboratory check before deciding.');
  if (inv.status !== 'phase1-recorded') throw conflict(`Investigation ${inv.number} is already decided.`);
  const item = inv.phase1!.items[input.cause];
  if (item.ok)
    throw new AppError(
      422,
      'NO_ASSIGNABLE_CAUSE',
      `The phase I check found no laboratory error under "${PHASE1_LABELS[input.cause].title}". A result may be invalidated only for an assignable laboratory cause found and documented in phase I; otherwise confirm the failure.`,
    );
  const failingIds = new Set(inv.failing.map((f) => f.containerId));
  const notFailing = input.retestContainerIds.filter((c) => !failingIds.has(c));
  if (notFailing.length)
    throw new AppError(
      422,
      'NOT_A_FAILING_CONTAINER',
      'Only failing containers of this investigation can be authorised for retest.',
      { containerIds: notFailing },
    );
  const retest = [...new Set(input.retestContainerIds)].sort((a, b) => a - b);
  const labels = inv.failing.filter((f) => retest.includes(f.containerId)).map((f) => f.label);
  const content = {
    investigation: inv.number,
    decision: 'invalidated',
    cause: input.cause,
    justification: input.justification,
    retestContainers: labels,
  };
  const step = {
    meaning: 'result-invalidated' as const,
    signature: input.signature,
    from: 'phase1-recorded' as const,
    stale: `Investigation ${inv.number} is already decided.`,
    content,
    statement: input.justification,
    ip,
  };
  return signedStep(db, user, inv, step, async (trx, sig, actor) => {
    const now = new Date();
    await trx('investigation')
      .where({ id })
      .update({
        status: 'retest-authorised',
        decision: 'invalidated',
        justification: `${PHASE1_LABELS[input.cause].title}: ${input.justification}`,
        retest_containers: JSON.stringify(retest),
        decided_by: user.id,
        decision_signature_id: sig.id,
        updated_at: now,
      });
    const lot = must(
      await trx('lot').where({ id: inv.lotId! }).forUpdate().first(),
      `lot ${inv.lotId} of investigation ${inv.number}`,
    );
    await setContainerStatus(trx, {
      lotId: inv.lotId!,
      containerIds: inv.failing.map((f) => f.containerId),
      status: 'sampled',
      reason: `Released from hold by investigation ${inv.number}: result invalidated, retest authorised`,
      signatureId: sig.id,
      userId: user.id,
      onlyWhereAllowed: true,
    });
    await appendAudit(trx, {
      actor,
      action: 'investigation.result-invalidated',
      entityType: 'investigation',
      entityId: id,
      before: { status: 'phase1-recorded', decision: null },
      after: { status: 'retest-authorised', decision: 'invalidated', cause: input.cause, retestContainers: labels },
      reason: input.justification,
      ip,
    });
    await moveLot(trx, {
      lotId: inv.lotId!,
      to: { identityStatus: 'retest-authorised' },
      now,
      audit: {
        actor,
        action: 'lot.retest-authorised',
        entityType: 'lot',
        entityId: inv.lotId!,
        before: { identityStatus: lot.identity_status },
        after: { identityStatus: 'retest-authorised', containers: labels },
        reason: `Investigation ${inv.number}: ${input.justification}`,
        ip,
      },
    });
    await enqueueMailToRole(
      trx,
      'operator',
      `Retest authorised: lot ${inv.lotNumber}`,
      `QA invalidated the failing result of lot ${inv.lotNumber} (investigation ${inv.number}) for an assignable laboratory cause and authorised a re-sample and retest of: ${labels.join(', ')}.\nThe original results stay on record.\n${pageLink(`/lots/${inv.lotId}`)}`,
    );
  });
}

export async function confirmFailure(
  db: Knex,
  user: AuthUser,
  id: number,
  input: ConfirmInput,
  ip: string | null,
): Promise<InvestigationDetail> {
  const inv = await repo.findInvestigation(db, id);
  if (!inv) throw notFound('The investigation');
  assertFailureKind(inv);
  if (inv.status === 'open') throw conflict('Record the phase I laboratory check before deciding.');
  const stale = `Investigation ${inv.number} is already decided.`;
  if (inv.status !== 'phase1-recorded') throw conflict(stale);
  const content = {
    investigation: inv.number,
    decision: 'confirmed',
    justification: input.justification,
    failing: inv.failing.map((f) => f.label),
  };
  const step = {
    meaning: 'failure-confirmed' as const,
    signature: input.signature,
    from: 'phase1-recorded' as const,
    stale,
    content,
    statement: input.justification,
    ip,
  };
  return signedStep(db, user, inv, step, async (trx, sig, actor) => {
    const now = await closeInvestigation(trx, id, {
      decision: 'confirmed',
      justification: input.justification,
      userId: user.id,
      signatureId: sig.id,
    });
    const lot = must(
      await trx('lot').where({ id: inv.lotId! }).forUpdate().first(),
      `lot ${inv.lotId} of investigation ${inv.number}`,
    );
    await setContainerStatus(trx, {
      lotId: inv.lotId!,
      containerIds: (await trx('container').where({ lot_id: inv.lotId! }).select('id')).map((c) => c.id),
      status: 'rejected',
      reason: `Lot rejected: failure confirmed by investigation ${inv.number}`,
      signatureId: sig.id,
      userId: user.id,
      onlyWhereAllowed: true,
    });
    await appendAudit(trx, {
      actor,
      action: 'investigation.failure-confirmed',
      entityType: 'investigation',
      entityId: id,
      before: { status: 'phase1-recorded', decision: null },
      after: { status: 'closed', decision: 'confirmed' },
      reason: input.justification,
      ip,
    });
    await moveLot(trx, {
      lotId: inv.lotId!,
      to: { status: 'rejected', identityStatus: 'rejected' },
      now,
      audit: {
        actor,
        action: 'lot.rejected',
        entityType: 'lot',
        entityId: inv.lotId!,
        before: { status: lot.status, identityStatus: lot.identity_status },
        after: { status: 'rejected', identityStatus: 'rejected' },
        reason: `Investigation ${inv.number}: ${input.justification}`,
        ip,
      },
    });
    await enqueueMailToRole(
      trx,
      'qa_manager',
      `Investigation ${inv.number} closed: lot ${inv.lotNumber} rejected`,
      `${user.fullName} confirmed the identity failure of lot ${inv.lotNumber} (${inv.materialName}) and rejected the lot.\nJustification: ${input.justification}\n${pageLink(`/investigations/${id}`)}`,
    );
  });
}

// ------------------------------------------------------------------ investigations of trend signals

/** The content QA signs when opening an investigation of a trend signal (rebuilt by the integrity recipe). */
export function openingContent(number: string, subject: TrendSubject) {
  return {
    investigation: number,
    signal: subject.signal.id,
    material: subject.signal.materialName,
    methodVersion: subject.signal.methodVersion,
    metric: subject.signal.metric,
    scope: subject.signal.scopeLabel,
    rule: subject.signal.rule,
    measurements: subject.measurements.map((m) => m.measurementId),
    reason: subject.reason,
  };
}

/**
 * Opens an investigation of an open trend signal (docs/trending.md, "Investigating a signal"): QA
 * signs (meaning "investigation-opened") over the signal and the measurements of its pattern, the
 * signal moves to "investigated" and links to the investigation, both audited, QA mailed; one short
 * transaction. The investigation holds no lot: a trend signal is an early warning, not a failure.
 */
export async function openFromSignal(
  db: Knex,
  user: AuthUser,
  signalId: number,
  input: OpenFromSignalInput,
  ip: string | null,
): Promise<InvestigationDetail> {
  const signal = await trendRepo.findSignal(db, signalId);
  if (!signal) throw notFound('The trend signal');
  const refuse = (status: string, investigationId: number | null) => {
    if (investigationId) throw conflict(`Trend signal ${signalId} already has its investigation.`, { investigationId });
    if (status !== 'open')
      throw conflict(
        `Trend signal ${signalId} is already acknowledged; an investigation opens only from an open signal.`,
      );
  };
  refuse(signal.status, signal.investigationId);
  const ids = [...new Set([...signal.pointIds, signal.measurementId])];
  const rows = (await trendRepo.trendRows(db, signal.methodId)).filter((r) => ids.includes(r.measurementId));
  const subject: TrendSubject = {
    signal: {
      id: signal.id,
      materialId: signal.materialId,
      materialName: signal.materialName,
      methodId: signal.methodId,
      methodVersion: signal.methodVersion,
      metric: signal.metric,
      metricTitle: METRIC_LABELS[signal.metric].title,
      scopeLabel: signal.scopeLabel,
      rule: signal.rule,
      ruleText: signal.ruleText,
      ruleSource: signal.ruleSource,
      value: signal.value,
      detail: signal.detail,
      raisedAt: signal.raisedAt,
    },
    measurements: rows.map((r) => ({
      measurementId: r.measurementId,
      at: r.at.toISOString(),
      value: r.metrics[signal.metric],
      lotNumber: r.lotNumber,
      container: r.container,
      source: r.source,
      instrument: r.instrument,
      operator: r.operator,
    })),
    reason: input.reason,
  };
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'investigation-opened',
    entityType: 'trend_signal',
    entityId: signalId,
    ip,
  });
  const created = await transactionWithRetry(db, async (trx) => {
    const row = await trendRepo.lockSignal(trx, signalId);
    if (!row) throw notFound('The trend signal');
    refuse(row.status, row.investigation_id);
    const now = new Date();
    const inv = await insertWithNextNumber(trx, {
      table: 'investigation',
      column: 'number',
      prefix: `INV-${yearOf(now)}-`,
      width: 4,
      row: (number) => ({
        number,
        kind: 'trend',
        lot_id: null,
        test_id: null,
        trend_signal_id: signalId,
        subject: JSON.stringify(subject),
        status: 'open',
        failing: '[]',
        phase1: null,
        decision: null,
        justification: null,
        retest_containers: null,
        opened_by: user.id,
        opened_at: now,
        decided_by: null,
        decision_signature_id: null,
        closed_at: null,
        updated_at: now,
      }),
    });
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'investigation-opened',
      entityType: 'investigation',
      entityId: inv.id,
      content: openingContent(inv.number, subject),
      statement: input.reason,
      ip,
    });
    await trx('investigation').where({ id: inv.id }).update({ opening_signature_id: sig.id });
    await trx('trend_signal').where({ id: signalId }).update({ status: 'investigated', investigation_id: inv.id });
    const actor = { id: user.id, name: user.fullName };
    await appendAudit(trx, {
      actor,
      action: 'investigation.opened',
      entityType: 'investigation',
      entityId: inv.id,
      after: {
        number: inv.number,
        kind: 'trend',
        trendSignalId: signalId,
        rule: signal.rule,
        metric: signal.metric,
        scope: signal.scopeLabel,
        measurements: subject.measurements.map((m) => ({
          measurementId: m.measurementId,
          lot: m.lotNumber,
          container: m.container,
        })),
      },
      reason: input.reason,
      ip,
    });
    await appendAudit(trx, {
      actor,
      action: 'trend.signal-investigated',
      entityType: 'trend_signal',
      entityId: signalId,
      before: { status: 'open', investigationId: null },
      after: { status: 'investigated', investigationId: inv.id, investigation: inv.number },
      reason: input.reason,
      ip,
    });
    await enqueueMailToRole(
      trx,
      'qa_manager',
      `Investigation ${inv.number} opened: trend signal on ${signal.materialName}`,
      [
        `${user.fullName} opened investigation ${inv.number} of the trend signal on ${signal.materialName} (identity method version ${signal.methodVersion}), ${signal.scopeLabel}.`,
        signal.detail,
        `Reason: ${input.reason}`,
        `Measurements of the pattern: ${subject.measurements.map((m) => `${m.lotNumber} ${m.container}`).join(', ')}.`,
        '',
        TREND_CAUTION,
        `Record the phase I laboratory check and the conclusion: ${pageLink(`/investigations/${inv.id}`)}`,
      ].join('\n'),
      user.id,
    );
    return inv;
  });
  return getInvestigation(db, created.id);
}

/**
 * Closes an investigation of a trend signal after its phase I check with QA's signed conclusion
 * (meaning "trend-concluded"). Changes no result, lot or certificate.
 */
export async function concludeTrend(
  db: Knex,
  user: AuthUser,
  id: number,
  input: ConcludeInput,
  ip: string | null,
): Promise<InvestigationDetail> {
  const inv = await repo.findInvestigation(db, id);
  if (!inv) throw notFound('The investigation');
  if (inv.kind !== 'trend')
    throw conflict(
      `Investigation ${inv.number} looks into a failing result: QA invalidates the result or confirms the failure.`,
    );
  if (inv.status === 'open') throw conflict('Record the phase I laboratory check before the conclusion.');
  const stale = `Investigation ${inv.number} is already closed.`;
  if (inv.status !== 'phase1-recorded') throw conflict(stale);
  const content = { investigation: inv.number, decision: 'concluded', conclusion: input.conclusion };
  const step = {
    meaning: 'trend-concluded' as const,
    signature: input.signature,
    from: 'phase1-recorded' as const,
    stale,
    content,
    statement: input.conclusion,
    ip,
  };
  return signedStep(db, user, inv, step, async (trx, sig, actor) => {
    await closeInvestigation(trx, id, {
      decision: 'concluded',
      justification: input.conclusion,
      userId: user.id,
      signatureId: sig.id,
    });
    await appendAudit(trx, {
      actor,
      action: 'investigation.trend-concluded',
      entityType: 'investigation',
      entityId: id,
      before: { status: 'phase1-recorded', decision: null },
      after: { status: 'closed', decision: 'concluded' },
      reason: input.conclusion,
      ip,
    });
    await enqueueMailToRole(
      trx,
      'qa_manager',
      `Investigation ${inv.number} closed: trend signal on ${inv.materialName} concluded`,
      `${user.fullName} concluded investigation ${inv.number} of a trend signal on ${inv.materialName}.\nConclusion: ${input.conclusion}\n${pageLink(`/investigations/${id}`)}`,
    );
  });
}
