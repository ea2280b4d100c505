/**
 * The two signatures of an identity test (21 CFR 211.194(a)(7)-(8): the person who performed
 * the test and a second person who reviewed it) and the lot outcome decided in the same
 * transaction as the verification signature (docs/architecture.md, "The identity flow").
 *
 * Segregation of duties is enforced here, not in the client: the verifier (or returner) of a
 * test is never its performer nor anyone who recorded one of its measurements, whatever roles
 * the account holds. Concurrency: the test row is locked FOR UPDATE and its status re-checked
 * inside the transaction, so of two verifiers signing at once exactly one signature is stored
 * and the other gets 409.
 */
import { transactionWithRetry } from '../../lib/retry';
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import type { SignatureInput } from '../../lib/contract';
import { checkSignatureCredentials, recordSignature } from '../../lib/esign';
import { AppError, conflict, forbidden } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { must, parseJson } from '../../lib/db';
import { enqueueMail, enqueueMailToRole } from '../../lib/mail';
import { assertTestIntact } from '../integrity';
import { closeAfterRetest, openInvestigation } from '../investigations';
import type { FailingContainer } from '../investigations/contract';
import { pageLink } from '../../lib/links';
import { runCertificateStep } from './certificate-step';
import { loadContext, scopesOf, signedContent, type TestContext } from './context';
import { effectiveResults, latestByContainer, lotOutcome, readiness } from './outcome';
import { enqueueEvent } from '../../lib/webhook-outbox';
import { moveLot } from '../lots';
import * as repo from './repo';
import type { StoredResult, VerifyOutcome } from './contract';

function statusConflict(ctx: TestContext, wanted: string): AppError {
  const s = ctx.test.status;
  const what =
    s === 'verified'
      ? 'has already been verified'
      : s === 'returned'
        ? 'has already been returned'
        : s === 'in-progress'
          ? 'is still in progress'
          : `is ${s}`;
  return conflict(`Attempt ${ctx.test.attempt} of lot ${ctx.lot.lotNumber} ${what}; it cannot be ${wanted} now.`, {
    status: s,
  });
}

export async function perform(db: Knex, user: AuthUser, testId: number, signature: SignatureInput, ip: string | null) {
  const pre = await loadContext(db, testId);
  if (pre.test.status !== 'in-progress') throw statusConflict(pre, 'signed performed');
  await checkSignatureCredentials(db, {
    user,
    credentials: signature,
    meaning: 'performed',
    entityType: 'identity_test',
    entityId: testId,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    const ctx = await loadContext(trx, testId, true);
    if (ctx.test.status !== 'in-progress') throw statusConflict(ctx, 'signed performed');
    const r = readiness(ctx.containers, ctx.scope, ctx.measurements);
    if (!r.ready) {
      const parts = [];
      if (r.missing.length) parts.push(`not yet measured: ${r.missing.map((c) => c.label).join(', ')}`);
      if (r.invalid.length)
        parts.push(`invalid measurement, measure again: ${r.invalid.map((c) => c.label).join(', ')}`);
      throw new AppError(
        409,
        'NOT_COMPLETE',
        `Every container needs a valid result before the test is signed performed (${parts.join('; ')}).`,
        {
          missing: r.missing.map((c) => c.label),
          invalid: r.invalid.map((c) => c.label),
        },
      );
    }
    const sig = await recordSignature(trx, {
      user,
      credentials: signature,
      meaning: 'performed',
      entityType: 'identity_test',
      entityId: testId,
      content: signedContent(ctx),
      ip,
    });
    const now = new Date();
    await trx('identity_test')
      .where({ id: testId })
      .update({
        status: 'awaiting-verification',
        performed_by: user.id,
        performed_signature_id: sig.id,
        updated_at: now,
        row_version: ctx.test.row_version + 1,
      });
    await moveLot(trx, {
      lotId: ctx.lot.id,
      to: { identityStatus: 'awaiting-verification' },
      now,
      audit: { recordedBy: 'test.performed' },
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'test.performed',
      entityType: 'identity_test',
      entityId: testId,
      before: { status: 'in-progress' },
      after: { status: 'awaiting-verification', performedBy: user.id, signatureId: sig.id, containers: r.measured },
      ip,
    });
    const latest = latestByContainer(ctx.measurements, testId);
    const fails = [...latest.values()].filter((m) => m.verdict === 'fail').length;
    await enqueueMailToRole(
      trx,
      'verifier',
      `Identity test awaits verification: lot ${ctx.lot.lotNumber} (attempt ${ctx.test.attempt})`,
      [
        `${user.fullName} signed the identity test of lot ${ctx.lot.lotNumber} (${ctx.lot.material.name}) performed.`,
        `${r.measured} container(s) measured${fails ? `, ${fails} failing` : ', all passing'}.`,
        `Review and sign: ${pageLink(`/tests/${testId}/review`)}`,
        'You cannot verify a test you performed or measured yourself.',
      ].join('\n'),
      user.id,
    );
  });
}

/** The verifier must be someone other than everyone who did the laboratory work. */
function assertIndependent(ctx: TestContext, user: AuthUser, action: string): void {
  if (ctx.test.performed_by === user.id)
    throw forbidden(
      `You performed this test, so you cannot ${action} it. A second person must review it (21 CFR 211.194(a)(8)).`,
    );
  if (ctx.measurements.some((m) => m.createdBy.id === user.id))
    throw forbidden(
      `You recorded measurements of this test, so you cannot ${action} it. A second person must review it.`,
    );
}

function failingList(
  ctx: TestContext,
  failing: { containerId: number; measurementId: number }[],
  rows: repo.MeasurementRow[],
): FailingContainer[] {
  return failing.map((f) => {
    const c = ctx.containers.find((x) => x.id === f.containerId)!;
    const row = rows.find((r) => r.id === f.measurementId);
    const result = parseJson<StoredResult | null>(row?.result, null);
    return {
      containerId: f.containerId,
      label: c.label,
      measurementId: f.measurementId,
      score: row?.match_score === null || row?.match_score === undefined ? null : Number(row.match_score),
      explanation: result?.explanation ?? [],
      hint: result?.libraryHint ?? [],
      hintText: result?.libraryHintText ?? 'Closest approved materials: not computed.',
    };
  });
}

export async function verify(
  db: Knex,
  user: AuthUser,
  testId: number,
  input: { signature: SignatureInput; comment?: string },
  ip: string | null,
): Promise<VerifyOutcome> {
  const pre = await loadContext(db, testId);
  assertIndependent(pre, user, 'verify');
  if (pre.test.status !== 'awaiting-verification') throw statusConflict(pre, 'verified');
  // The bytes and the signed content re-checked now: nobody signs over data that changed (docs/compliance.md).
  await assertTestIntact(db, testId, user, ip);
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'verified',
    entityType: 'identity_test',
    entityId: testId,
    ip,
  });
  const actor = { id: user.id, name: user.fullName };
  const outcome = await transactionWithRetry(db, async (trx) => {
    const ctx = await loadContext(trx, testId, true);
    if (ctx.test.status !== 'awaiting-verification') throw statusConflict(ctx, 'verified');
    assertIndependent(ctx, user, 'verify');
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'verified',
      entityType: 'identity_test',
      entityId: testId,
      content: signedContent(ctx),
      statement: input.comment ?? null,
      ip,
    });
    const now = new Date();
    const updated = await trx('identity_test')
      .where({ id: testId, status: 'awaiting-verification', row_version: ctx.test.row_version })
      .update({
        status: 'verified',
        verified_by: user.id,
        verified_signature_id: sig.id,
        updated_at: now,
        row_version: ctx.test.row_version + 1,
      });
    if (updated !== 1) throw conflict('Someone else decided this test at the same moment; nothing was signed.');
    await appendAudit(trx, {
      actor,
      action: 'test.verified',
      entityType: 'identity_test',
      entityId: testId,
      before: { status: 'awaiting-verification' },
      after: { status: 'verified', verifiedBy: user.id, signatureId: sig.id },
      reason: input.comment ?? null,
      ip,
    });

    // Outcome, in the same transaction as the signature.
    const tests = await repo.testsOfLot(trx, ctx.lot.id);
    const scopes = await scopesOf(trx, tests);
    const all = await repo.measurementsOfLot(trx, ctx.lot.id);
    const eff = effectiveResults(ctx.containers, tests, scopes, all, testId);
    const out = lotOutcome(ctx.containers, eff);
    const lotRow = must(
      await trx('lot').where({ id: ctx.lot.id }).forUpdate().first(),
      `lot ${ctx.lot.id} of test ${testId}`,
    );
    if (out.kind === 'incomplete')
      throw new AppError(
        409,
        'NOT_COMPLETE',
        'Some containers of the lot have no verified result; the lot outcome cannot be decided.',
        out,
      );
    const retestOf = ctx.test.retest_of_investigation_id;
    if (out.kind === 'passed') {
      await enqueueEvent(trx, 'lot.identity-passed', {
        lotNumber: ctx.lot.lotNumber,
        erpReceiptNumber: ctx.lot.erpReceiptNumber,
        material: ctx.lot.material.code,
        identityStatus: 'passed',
        testedContainers: ctx.containers.length,
        status: 'quarantine',
      });
      await moveLot(trx, {
        lotId: ctx.lot.id,
        to: { identityStatus: 'passed' },
        now,
        audit: {
          actor,
          action: 'lot.identity-passed',
          entityType: 'lot',
          entityId: ctx.lot.id,
          before: { identityStatus: lotRow.identity_status },
          after: { identityStatus: 'passed', testId, containers: ctx.containers.length },
          ip,
        },
      });
      if (retestOf)
        await closeAfterRetest(
          trx,
          retestOf,
          { passed: true, testId, attempt: ctx.test.attempt, lotNumber: ctx.lot.lotNumber },
          actor,
          ip,
        );
      return { kind: 'passed' as const, investigation: null };
    }
    const rows = await trx('measurement').whereIn(
      'id',
      out.failing.map((f) => f.measurementId),
    );
    const failing = failingList(ctx, out.failing, rows);
    await enqueueEvent(trx, 'lot.identity-failed', {
      lotNumber: ctx.lot.lotNumber,
      erpReceiptNumber: ctx.lot.erpReceiptNumber,
      material: ctx.lot.material.code,
      identityStatus: 'failed',
      status: 'quarantine',
    });
    await moveLot(trx, {
      lotId: ctx.lot.id,
      to: { identityStatus: 'failed' },
      now,
      audit: {
        actor,
        action: 'lot.identity-failed',
        entityType: 'lot',
        entityId: ctx.lot.id,
        before: { identityStatus: lotRow.identity_status },
        after: { identityStatus: 'failed', status: lotRow.status, failing: failing.map((f) => f.label) },
        ip,
      },
    });
    const inv = await openInvestigation(trx, {
      lot: { id: ctx.lot.id, lotNumber: ctx.lot.lotNumber, materialName: ctx.lot.material.name },
      test: { id: testId, attempt: ctx.test.attempt },
      failing,
      actor,
      ip,
    });
    if (retestOf)
      await closeAfterRetest(
        trx,
        retestOf,
        {
          passed: false,
          testId,
          attempt: ctx.test.attempt,
          lotNumber: ctx.lot.lotNumber,
          nextInvestigation: inv.number,
        },
        actor,
        ip,
      );
    return { kind: 'failed' as const, investigation: inv };
  });
  let certificate: 'issued' | 'pending' | null = null;
  if (outcome.kind === 'passed') certificate = await runCertificateStep(db, { lotId: pre.lot.id, testId, actor });
  return { outcome: outcome.kind, investigation: outcome.investigation, certificate };
}

export async function returnTest(
  db: Knex,
  user: AuthUser,
  testId: number,
  input: { reason: string; signature: SignatureInput },
  ip: string | null,
) {
  const pre = await loadContext(db, testId);
  assertIndependent(pre, user, 'return');
  if (pre.test.status !== 'awaiting-verification') throw statusConflict(pre, 'returned');
  const failingNow = [...latestByContainer(pre.measurements, testId).values()].filter((m) => m.verdict === 'fail');
  if (failingNow.length) throw failureNeedsInvestigation(failingNow.map((m) => m.label));
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'returned',
    entityType: 'identity_test',
    entityId: testId,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    const ctx = await loadContext(trx, testId, true);
    if (ctx.test.status !== 'awaiting-verification') throw statusConflict(ctx, 'returned');
    assertIndependent(ctx, user, 'return');
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'returned',
      entityType: 'identity_test',
      entityId: testId,
      content: signedContent(ctx),
      statement: input.reason,
      ip,
    });
    const now = new Date();
    await trx('identity_test')
      .where({ id: testId })
      .update({
        status: 'returned',
        returned_reason: input.reason,
        returned_signature_id: sig.id,
        updated_at: now,
        row_version: ctx.test.row_version + 1,
      });
    // A returned retest goes back to its QA authorisation, so the next attempt is again a retest of the named containers.
    const nextStatus = ctx.test.retest_of_investigation_id ? 'retest-authorised' : 'testing';
    await moveLot(trx, {
      lotId: ctx.lot.id,
      to: { identityStatus: nextStatus },
      now,
      audit: { recordedBy: 'test.returned' },
    });
    const actor = { id: user.id, name: user.fullName };
    await appendAudit(trx, {
      actor,
      action: 'test.returned',
      entityType: 'identity_test',
      entityId: testId,
      before: { status: 'awaiting-verification' },
      after: { status: 'returned', signatureId: sig.id },
      reason: input.reason,
      ip,
    });
    const performer = ctx.test.performed_by ? await trx('app_user').where({ id: ctx.test.performed_by }).first() : null;
    if (performer)
      await enqueueMail(trx, {
        to: [performer.email],
        subject: `Identity test returned: lot ${ctx.lot.lotNumber} (attempt ${ctx.test.attempt})`,
        text: [
          `${user.fullName} returned the identity test of lot ${ctx.lot.lotNumber} (${ctx.lot.material.name}), attempt ${ctx.test.attempt}.`,
          `Reason: ${input.reason}`,
          'The returned attempt stays on record. Start a new attempt and measure the containers again:',
          pageLink(`/lots/${ctx.lot.id}`),
        ].join('\n'),
      });
  });
}

export function failureNeedsInvestigation(labels: string[]): AppError {
  return new AppError(
    409,
    'FAILURE_NEEDS_INVESTIGATION',
    `Container(s) ${labels.join(', ')} failed. A failing result cannot be sent back for re-measurement: if the data are complete and correctly recorded, sign the test verified and an investigation opens; only QA can invalidate a result and authorise a retest.`,
    { failing: labels },
  );
}
