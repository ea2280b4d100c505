/**
 * Retest of a released lot (issue 14 item 5) against the real MariaDB and the real engine with real
 * spectra from ../shared/reference-data (fixtures-testing.ts).
 *
 * Rules checked and their sources:
 * - a material held beyond its retest date is retested and approved again before use
 *   (21 CFR 211.87; ICH Q7 para 11.6 on retest dates, from memory);
 * - the retest is started by QA with an e-signature and its meaning (21 CFR 11.50), audited;
 * - the new identity test runs under the material's current approved method version
 *   (issue 14 item 5; docs/methods.md: an attempt keeps the version it started with);
 * - the retest's outcome goes through verification and QA's disposition again; the release
 *   record of the first release stays on record (nothing overwritten, docs/architecture.md,
 *   "Data rules").
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app';
import { db, makeUser, PASSWORD, sig } from './helpers';
import { TEST_DB } from './db-name';
import {
  agent,
  approvedMaterial,
  FIBRES,
  flushMail,
  instrumentWithCheck,
  profileFor,
  receiveLot,
  retire,
  startTest,
  upload,
  type ApprovedMaterial,
} from './fixtures-testing';
import { approveMethod } from './fixtures-library';

let nylon: ApprovedMaterial;
let operator: Awaited<ReturnType<typeof agent>>;
let verifier: Awaited<ReturnType<typeof agent>>;
let qa: Awaited<ReturnType<typeof agent>>;
let qa2: Awaited<ReturnType<typeof agent>>;
let qa3: Awaited<ReturnType<typeof agent>>;
let instrumentId: number;

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 for retest', referenceFiles: [FIBRES.nylon66Reference] });
  operator = await agent(['operator']);
  verifier = await agent(['verifier']);
  qa = await agent(['qa_manager']);
  qa2 = await agent(['qa_manager']);
  qa3 = await agent(['qa_manager']);
  ({ instrumentId } = await instrumentWithCheck('valid'));
  await profileFor(nylon.materialId);
});

afterAll(async () => {
  await flushMail();
  await retire();
});

/** Measures every container, signs performed and verified; returns the test id. */
async function testAndVerify(lotId: number, containerIds: number[], files: string[]) {
  const testId = await startTest(operator.agent, lotId, instrumentId);
  for (const [i, id] of containerIds.entries()) await upload(operator.agent, testId, { containerId: id }, files[i]);
  expect(
    (await operator.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(operator.user) })).status,
  ).toBe(200);
  const v = await verifier.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(verifier.user) });
  expect(v.status).toBe(200);
  return { testId, outcome: v.body.outcome as string };
}

async function recordChecks(lotId: number) {
  for (const checkKey of ['coa-review', 'appearance']) {
    const r = await qa.agent.post(`/api/lots/${lotId}/checks`).send({
      checkKey,
      outcome: 'conforms',
      reference: checkKey === 'coa-review' ? 'CoA 24-2291' : null,
      signature: sig(qa.user),
    });
    expect(r.status).toBe(201);
  }
}

/** A lot received, sampled, tested, verified, checked and released by QA. */
async function releasedLot() {
  const lot = await receiveLot(operator.agent, nylon.materialId, 2);
  const ids = lot.containers.map((c: { id: number }) => c.id);
  await testAndVerify(lot.id, ids, FIBRES.nylon66Samples.slice(0, 2));
  await recordChecks(lot.id);
  const rel = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
  expect(rel.status).toBe(200);
  return { lot, ids, release: rel.body.disposition as { id: number; retestDate: string } };
}

const REASON = 'Retest date reached; the lot is still in stock and needed for production.';

describe('retest of a released lot', () => {
  it('is listed in the work queue when its retest date is near (site setting RETEST_NOTICE_DAYS)', async () => {
    const { lot, release } = await releasedLot();
    // The profile's interval is 24 months: beyond the default notice of 30 days ...
    const near = (await qa.agent.get('/api/work-queue?full=retests-due')).body.sections.find(
      (s: { key: string }) => s.key === 'retests-due',
    );
    expect(near?.items.map((i: { id: number }) => i.id) ?? []).not.toContain(lot.id);
    // ... and within a notice of 800 days, as a site that plans its retests early would set it.
    const app = createApp({ database: TEST_DB, config: { signInRateLimit: 10_000, retestNoticeDays: 800 } }).app;
    const u = await makeUser(['qa_manager']);
    const a = request.agent(app);
    expect((await a.post('/api/auth/sign-in').send({ username: u.username, password: PASSWORD })).status).toBe(200);
    const q = (await a.get('/api/work-queue?full=retests-due')).body;
    const due = q.sections.find((s: { key: string }) => s.key === 'retests-due');
    expect(due.title).toMatch(/800 days/);
    const item = due.items.find((i: { id: number }) => i.id === lot.id);
    expect(item.detail).toContain(release.retestDate);
    await db()('app_user').where({ id: u.id }).update({ active: 0 });
  });

  it('is refused to a non-QA role, for a lot that is not released, and without a reason or a signature', async () => {
    const { lot } = await releasedLot();
    const asOperator = await operator.agent
      .post(`/api/lots/${lot.id}/retest`)
      .send({ reason: REASON, signature: sig(operator.user) });
    expect(asOperator.status).toBe(403);
    const asVerifier = await verifier.agent
      .post(`/api/lots/${lot.id}/retest`)
      .send({ reason: REASON, signature: sig(verifier.user) });
    expect(asVerifier.status).toBe(403);
    const noReason = await qa.agent.post(`/api/lots/${lot.id}/retest`).send({ signature: sig(qa.user) });
    expect(noReason.status).toBe(400);
    const shortReason = await qa.agent
      .post(`/api/lots/${lot.id}/retest`)
      .send({ reason: 'due', signature: sig(qa.user) });
    expect(shortReason.status).toBe(400);
    const noSignature = await qa.agent.post(`/api/lots/${lot.id}/retest`).send({ reason: REASON });
    expect(noSignature.status).toBe(400);
    const wrongPassword = await qa.agent
      .post(`/api/lots/${lot.id}/retest`)
      .send({ reason: REASON, signature: { username: qa.user.username, password: 'not-the-password-1' } });
    expect([401, 403]).toContain(wrongPassword.status);
    // nothing changed
    const after = (await qa.agent.get(`/api/lots/${lot.id}`)).body;
    expect(after.status).toBe('released');
    expect(await db()('lot_retest').where({ lot_id: lot.id }).first()).toBeUndefined();

    const quarantined = await receiveLot(operator.agent, nylon.materialId, 1);
    const notReleased = await qa.agent
      .post(`/api/lots/${quarantined.id}/retest`)
      .send({ reason: REASON, signature: sig(qa.user) });
    expect(notReleased.status).toBe(409);
    expect(notReleased.body.error.message).toMatch(/only a released lot is retested/);
  });

  it('QA starts it signed and audited; the new test runs under the current method version; verification and disposition follow again', async () => {
    const { lot, ids, release } = await releasedLot();
    const firstCert = (await db()('lot').where({ id: lot.id }).first('certificate_id'))!.certificate_id;

    // QA approves a new method version after the release: the retest must use it.
    const current = (await qa.agent.get(`/api/methods/${nylon.methodId}`)).body;
    const draft = await qa2.agent
      .post(`/api/methods/${nylon.methodId}/new-version`)
      .send({ params: current.params, changeNote: 'Periodic review: version confirmed for the retest test.' });
    expect(draft.status).toBe(201);
    await approveMethod(qa3.agent, qa3.user, draft.body.id, qa);

    const res = await qa.agent.post(`/api/lots/${lot.id}/retest`).send({ reason: REASON, signature: sig(qa.user) });
    expect(res.status).toBe(200);
    expect(res.body.status).toBe('quarantine');
    expect(res.body.retests).toHaveLength(1);
    expect(res.body.retests[0]).toMatchObject({ reason: REASON, retestDateDue: release.retestDate });
    expect(res.body.retests[0].signature.meaning).toBe('retest-started');
    expect(res.body.releasable).toBe(false);
    const detail = (await qa.agent.get(`/api/lots/${lot.id}`)).body;
    expect(detail.identityStatus).toBe('awaiting-testing');
    expect(detail.containers.map((c: { status: string }) => c.status)).toEqual(['sampled', 'sampled']);
    const ev = await db()('audit_event')
      .where({ action: 'lot.retest-started', entity_id: String(lot.id) })
      .first();
    expect(JSON.parse(ev!.before_json!)).toMatchObject({ status: 'released' });
    expect(JSON.parse(ev!.after_json!)).toMatchObject({ status: 'quarantine', reopens: release.id });
    // the first release stays on record
    expect(await db()('lot_disposition').where({ id: release.id }).first()).toMatchObject({ decision: 'released' });
    // a second retest while the first is under way is refused
    const again = await qa.agent.post(`/api/lots/${lot.id}/retest`).send({ reason: REASON, signature: sig(qa.user) });
    expect(again.status).toBe(409);

    // the operator's work queue lists the lot to test
    const toTest = (await operator.agent.get('/api/work-queue?full=lots-to-test')).body.sections.find(
      (s: { key: string }) => s.key === 'lots-to-test',
    );
    expect(toTest.items.map((i: { id: number }) => i.id)).toContain(lot.id);

    // the retest attempt: every container measured again, under the newly approved version
    const { testId, outcome } = await testAndVerify(lot.id, ids, FIBRES.nylon66Samples.slice(1, 3));
    expect(outcome).toBe('passed');
    const t = (await db()('identity_test').where({ id: testId }).first('method_id', 'attempt'))!;
    expect(t.method_id).toBe(draft.body.id);
    expect(t.method_id).not.toBe(nylon.methodId);
    expect(t.attempt).toBe(2);
    // a new certificate supersedes the one from before the retest
    const lotRow = (await db()('lot').where({ id: lot.id }).first('certificate_id', 'identity_status'))!;
    expect(lotRow.identity_status).toBe('passed');
    expect(lotRow.certificate_id).not.toBe(firstCert);
    const newCert = await db()('certificate').where({ id: lotRow.certificate_id! }).first('supersedes_id', 'test_id');
    expect(newCert).toMatchObject({ supersedes_id: firstCert, test_id: testId });

    // QA's disposition again: released with a new release record and retest date
    const rel = await qa2.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa2.user) });
    expect(rel.status).toBe(200);
    expect(rel.body.status).toBe('released');
    expect(rel.body.disposition.id).not.toBe(release.id);
    expect(rel.body.disposition.decidedBy.id).toBe(qa2.user.id);
    const after = (await qa.agent.get(`/api/lots/${lot.id}`)).body;
    expect(after.containers.map((c: { status: string }) => c.status)).toEqual(['released', 'released']);
  });

  it('the database refuses a released lot back in quarantine, or a new retest date, without the records', async () => {
    const { lot } = await releasedLot();
    await expect(
      db()('lot').where({ id: lot.id }).update({ status: 'quarantine', identity_status: 'awaiting-testing' }),
    ).rejects.toThrow(/returns to quarantine only through a signed retest record/);
    await expect(db()('lot').where({ id: lot.id }).update({ retest_date: '2040-01-01' })).rejects.toThrow(
      /retest date is set only by a release record/,
    );
  });
});
