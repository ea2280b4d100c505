/**
 * Two-person verification of identity tests and the lot outcome, against the real MariaDB.
 *
 * Sources of the rules checked here:
 * - 21 CFR 211.194(a)(7)-(8): laboratory records carry the signature of the person who performed
 *   the test and of a second person who reviewed it -> the verifier is never the performer,
 *   enforced by the server even for an account holding both roles (the demo account "dana");
 * - 21 CFR 11.50 / 11.200: a signature shows name, time and meaning and re-asks the password;
 * - docs/architecture.md, "The identity flow": the outcome is written in the same transaction as the signature, and
 *   concurrent signing of one record lets exactly one through (the other gets 409);
 * - EU GMP Annex 8 para 2: the lot passes only when every container passes.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { db, sig } from './helpers';
import {
  agent,
  approvedMaterial,
  FIBRES,
  flushMail,
  retire,
  instrumentWithCheck,
  receiveLot,
  startTest,
  upload,
  type ApprovedMaterial,
} from './fixtures-testing';

type Signed = Awaited<ReturnType<typeof agent>>;

let nylon: ApprovedMaterial;
let instrumentId: number;
let olga: Signed;
let victor: Signed;

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 yarn', referenceFiles: [FIBRES.nylon66Reference] });
  await approvedMaterial({ name: 'Polyester (PET) yarn', referenceFiles: [FIBRES.petReference] });
  instrumentId = (await instrumentWithCheck('valid')).instrumentId;
  olga = await agent(['operator']);
  victor = await agent(['verifier']);
});

/** A lot whose test was measured by `by` with the given files and signed performed. */
async function performedLot(by: Signed, files: string[]) {
  const lot = await receiveLot(by.agent, nylon.materialId, files.length);
  const testId = await startTest(by.agent, lot.id, instrumentId);
  for (const [i, f] of files.entries()) await upload(by.agent, testId, { containerId: lot.containers[i].id }, f);
  const res = await by.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(by.user) });
  if (res.status !== 200) throw new Error(`perform failed ${res.status} ${JSON.stringify(res.body)}`);
  return { lot, testId };
}

afterAll(async () => {
  await flushMail();
  await retire();
});

describe('segregation of duties', () => {
  it('an account holding operator and verifier cannot verify or return its own test, and does not see it in its queue', async () => {
    const dana = await agent(['operator', 'verifier']);
    const { testId } = await performedLot(dana, FIBRES.nylon66Samples.slice(0, 2));
    const queue = await dana.agent.get('/api/verification/queue');
    expect(queue.status).toBe(200);
    expect(queue.body.map((t: { testId: number }) => t.testId)).not.toContain(testId);
    const wq = await dana.agent.get('/api/work-queue?full=tests-to-verify');
    const toVerify = wq.body.sections.find((s: { key: string }) => s.key === 'tests-to-verify');
    expect(toVerify.items.map((i: { id: number }) => i.id)).not.toContain(testId);
    const v = await dana.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(dana.user) });
    expect(v.status).toBe(403);
    expect(v.body.error.message).toMatch(/performed this test/);
    const r = await dana.agent
      .post(`/api/tests/${testId}/return`)
      .send({ reason: 'I would like to redo my own work', signature: sig(dana.user) });
    expect(r.status).toBe(403);
    expect(
      await db()('e_signature').where({ entity_type: 'identity_test', entity_id: String(testId), meaning: 'verified' }),
    ).toHaveLength(0);
    // ...while another verifier sees it and may sign it
    const q2 = await victor.agent.get('/api/verification/queue');
    expect(q2.body.map((t: { testId: number }) => t.testId)).toContain(testId);
  });

  it('a verifier who recorded one measurement of the test cannot verify it, even though someone else signed performed', async () => {
    const helper = await agent(['operator', 'verifier']);
    const lot = await receiveLot(olga.agent, nylon.materialId, 2);
    const testId = await startTest(olga.agent, lot.id, instrumentId);
    await upload(olga.agent, testId, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[0]);
    // the helper may measure only once the attempt is handed over (docs/provenance.md)
    const h = await olga.agent
      .post(`/api/tests/${testId}/hand-over`)
      .send({ toUserId: helper.user.id, reason: 'Olga is called to the receiving bay.' });
    expect(h.status).toBe(200);
    await upload(helper.agent, testId, { containerId: lot.containers[1].id }, FIBRES.nylon66Samples[1]);
    expect((await olga.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(olga.user) })).status).toBe(
      200,
    );
    const v = await helper.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(helper.user) });
    expect(v.status).toBe(403);
    expect(v.body.error.message).toMatch(/recorded measurements/);
  });

  it('an operator without the verifier role cannot verify (403), and a wrong password signs nothing (401, audited)', async () => {
    const { testId } = await performedLot(olga, FIBRES.nylon66Samples.slice(0, 1));
    const other = await agent(['operator']);
    expect((await other.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(other.user) })).status).toBe(
      403,
    );
    const v2 = await agent(['verifier']);
    const bad = await v2.agent
      .post(`/api/tests/${testId}/verify`)
      .send({ signature: { username: v2.user.username, password: 'not-the-password' } });
    expect(bad.status).toBe(401);
    expect((await db()('identity_test').where({ id: testId }).first())!.status).toBe('awaiting-verification');
    const refused = await db()('audit_event').where({
      action: 'signature.refused',
      entity_type: 'identity_test',
      entity_id: String(testId),
      actor_id: v2.user.id,
    });
    expect(refused).toHaveLength(1);
  });
});

describe('verification and outcome', () => {
  it('all containers pass and verified: identity passed in the same transaction as the signature, then the certificate', async () => {
    const { lot, testId } = await performedLot(olga, FIBRES.nylon66Samples);
    const review = await victor.agent.get(`/api/tests/${testId}/review`);
    expect(review.status).toBe(200);
    expect(review.body.measurements).toHaveLength(3);
    for (const m of review.body.measurements) {
      expect(m.verdict).toBe('pass');
      expect(m.result.criteria.length).toBeGreaterThan(0);
      expect(m.result.bands.length).toBeGreaterThan(0);
      expect(m.instrumentCheck.verdict).toBe('pass');
      expect(m.method.version).toBe(1);
    }
    expect(review.body.references.map((r: { id: number }) => r.id)).toEqual(nylon.referenceIds);
    expect(review.body.instrumentChecks).toHaveLength(1);
    // the plot data: difference is sample minus reference on the method grid
    const plot = await victor.agent.get(`/api/measurements/${review.body.measurements[0].id}/plot`);
    const o = plot.body.overlay;
    expect(o.x.length).toBe(o.sample.length);
    expect(o.reference.length).toBe(o.difference.length);
    const i = o.sample.findIndex((v: number | null) => v !== null && Math.abs(v) > 0.2);
    expect(o.difference[i]).toBeCloseTo(o.sample[i] - o.reference[i], 5);
    expect(plot.body.raw.x.length).toBeGreaterThan(1000);

    const v = await victor.agent
      .post(`/api/tests/${testId}/verify`)
      .send({ signature: sig(victor.user), comment: 'Raw data, instrument check and versions reviewed.' });
    expect(v.status).toBe(200);
    expect(v.body.outcome).toBe('passed');
    const after = await victor.agent.get(`/api/lots/${lot.id}`);
    expect(after.body).toMatchObject({ identityStatus: 'passed', status: 'quarantine' });
    expect(['issued', 'pending']).toContain(after.body.certificate.state);
    expect(after.body.certificate.state).toBe(v.body.certificate);
    expect(after.body.containers.every((c: { effective: { verdict: string } }) => c.effective.verdict === 'pass')).toBe(
      true,
    );
    const test = await victor.agent.get(`/api/tests/${testId}`);
    expect(
      test.body.signatures.map((s: { meaning: string; printedName: string }) => [s.meaning, s.printedName]),
    ).toEqual([
      ['performed', olga.user.fullName],
      ['verified', victor.user.fullName],
    ]);
    // signature, verification and outcome were appended together, in this order, in one transaction
    const events = await db()('audit_event')
      .whereIn('action', ['signature.signed', 'test.verified', 'lot.identity-passed'])
      .andWhere('actor_id', victor.user.id)
      .orderBy('id', 'desc')
      .limit(3);
    const ids = events.map((e) => Number(e.id)).sort((a, b) => a - b);
    expect(events.map((e) => e.action).reverse()).toEqual(['signature.signed', 'test.verified', 'lot.identity-passed']);
    expect(ids[2] - ids[0]).toBe(2);
  });

  it('ten verifiers signing the same test at once: exactly one signature, the others 409', async () => {
    const { lot, testId } = await performedLot(olga, FIBRES.nylon66Samples.slice(0, 2));
    const verifiers = await Promise.all(Array.from({ length: 10 }, () => agent(['verifier'])));
    const res = await Promise.all(
      verifiers.map((v) => v.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(v.user) })),
    );
    const statuses = res.map((r) => r.status).sort();
    expect(statuses).toEqual([200, ...Array(9).fill(409)]);
    expect(
      await db()('e_signature').where({ entity_type: 'identity_test', entity_id: String(testId), meaning: 'verified' }),
    ).toHaveLength(1);
    expect(await db()('audit_event').where({ action: 'lot.identity-passed', entity_id: String(lot.id) })).toHaveLength(
      1,
    );
    const winner = res.findIndex((r) => r.status === 200);
    expect((await db()('identity_test').where({ id: testId }).first())!.verified_by).toBe(verifiers[winner].user.id);
    for (const r of res.filter((x) => x.status === 409)) expect(r.body.error.message).toMatch(/already been verified/);
  });

  it('the same verifier double-clicking: one signature, one 409', async () => {
    const { testId } = await performedLot(olga, FIBRES.nylon66Samples.slice(0, 1));
    const v = await agent(['verifier']);
    const res = await Promise.all(
      [0, 1, 2].map(() => v.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(v.user) })),
    );
    expect(res.map((r) => r.status).sort()).toEqual([200, 409, 409]);
    expect(
      await db()('e_signature').where({ entity_type: 'identity_test', entity_id: String(testId), meaning: 'verified' }),
    ).toHaveLength(1);
  });

  it('returns a test with a mandatory reason: mail to the performer, attempt kept, a new attempt re-measures', async () => {
    const { lot, testId } = await performedLot(olga, FIBRES.nylon66Samples.slice(0, 2));
    const noReason = await victor.agent.post(`/api/tests/${testId}/return`).send({ signature: sig(victor.user) });
    expect(noReason.status).toBe(400);
    const short = await victor.agent
      .post(`/api/tests/${testId}/return`)
      .send({ reason: 'no', signature: sig(victor.user) });
    expect(short.status).toBe(400);
    const reason = 'Container 002 file is from the previous shift (time stamp in the title); re-measure it.';
    const r = await victor.agent.post(`/api/tests/${testId}/return`).send({ reason, signature: sig(victor.user) });
    expect(r.status).toBe(200);
    expect(r.body).toMatchObject({ status: 'returned', returnedReason: reason });
    const mail = await db()('mail_outbox')
      .where('subject', 'like', `Identity test returned: lot ${lot.lotNumber}%`)
      .first();
    expect(mail!.to_address).toBe(`${olga.user.username}@test.example`);
    expect(mail!.body).toContain(reason);
    const lotNow = await olga.agent.get(`/api/lots/${lot.id}`);
    expect(lotNow.body.identityStatus).toBe('testing');
    // the returned attempt's results do not count for the lot
    expect(lotNow.body.containers.every((c: { effective: unknown }) => c.effective === null)).toBe(true);
    // no verify after return
    expect((await victor.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(victor.user) })).status).toBe(
      409,
    );
    // operator starts attempt 2 and re-measures; attempt 1 and its measurements stay
    const t2 = await startTest(olga.agent, lot.id, instrumentId);
    const detail2 = await olga.agent.get(`/api/tests/${t2}`);
    expect(detail2.body.attempt).toBe(2);
    expect(await db()('measurement').where({ test_id: testId })).toHaveLength(2);
    await upload(olga.agent, t2, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[0]);
    await upload(olga.agent, t2, { containerId: lot.containers[1].id }, FIBRES.nylon66Samples[2]);
    expect((await olga.agent.post(`/api/tests/${t2}/perform`).send({ signature: sig(olga.user) })).status).toBe(200);
    expect(
      (await victor.agent.post(`/api/tests/${t2}/verify`).send({ signature: sig(victor.user) })).body.outcome,
    ).toBe('passed');
    const final = await olga.agent.get(`/api/lots/${lot.id}`);
    expect(final.body.tests.map((t: { status: string }) => t.status)).toEqual(['returned', 'verified']);
    expect(final.body.tests[0].signatures.map((s: { meaning: string }) => s.meaning)).toEqual([
      'performed',
      'returned',
    ]);
  });

  it('a test with a failing container cannot be returned for re-measurement (only QA can invalidate a failure)', async () => {
    const { testId } = await performedLot(olga, [FIBRES.nylon66Samples[0], FIBRES.petSample]);
    const r = await victor.agent
      .post(`/api/tests/${testId}/return`)
      .send({ reason: 'Please measure the second drum again.', signature: sig(victor.user) });
    expect(r.status).toBe(409);
    expect(r.body.error.code).toBe('FAILURE_NEEDS_INVESTIGATION');
    expect((await db()('identity_test').where({ id: testId }).first())!.status).toBe('awaiting-verification');
  });

  it('the work queue lists lots to test for operators and tests to verify for verifiers', async () => {
    const lot = await receiveLot(olga.agent, nylon.materialId, 1);
    const wq = await olga.agent.get('/api/work-queue?full=lots-to-test');
    expect(wq.status).toBe(200);
    const lotsToTest = wq.body.sections.find((s: { key: string }) => s.key === 'lots-to-test');
    expect(lotsToTest.items.map((i: { id: number }) => i.id)).toContain(lot.id);
    expect(wq.body.sections.find((s: { key: string }) => s.key === 'tests-to-verify')).toBeUndefined();
    const { testId } = await performedLot(olga, FIBRES.nylon66Samples.slice(0, 1));
    const vq = await victor.agent.get('/api/work-queue?full=tests-to-verify');
    const tv = vq.body.sections.find((s: { key: string }) => s.key === 'tests-to-verify');
    expect(tv.items.map((i: { id: number }) => i.id)).toContain(testId);
    expect(tv.count).toBe(tv.items.length);
    expect(vq.body.sections.find((s: { key: string }) => s.key === 'lots-to-test')).toBeUndefined();
  });
});
