/**
 * QA disposition (issue 14 item 5) against the real MariaDB and the real engine with real spectra
 * from ../shared/reference-data (fixtures-testing.ts).
 *
 * Rules checked and their sources:
 * - each lot is held until sampled, tested and released by the quality unit (21 CFR 211.84(a));
 *   release only when identity passed with a current certificate, no investigation is open, the
 *   material's other required checks are recorded and the source is not blocked (issue 14, item 5);
 * - a supplier's certificate of analysis needs checking against the specification
 *   (21 CFR 211.84(d)(2), from memory);
 * - release and rejection are e-signed with their meaning (21 CFR 11.50) and audited;
 * - the release sets the retest date from the material's retest interval (21 CFR 211.87;
 *   ICH Q7 para 11.6 on retest dates, from memory);
 * - segregation of duties: whoever did lab work on a lot does not release it (docs/architecture.md, "The identity flow").
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { db, sig } from './helpers';
import {
  agent,
  approvedMaterial,
  FIBRES,
  fixtureQaAgent,
  flushMail,
  instrumentWithCheck,
  profileFor,
  receiveLot,
  retire,
  startTest,
  supplierFor,
  upload,
  type ApprovedMaterial,
} from './fixtures-testing';

let nylon: ApprovedMaterial;
let operator: Awaited<ReturnType<typeof agent>>;
let verifier: Awaited<ReturnType<typeof agent>>;
let qa: Awaited<ReturnType<typeof agent>>;
let instrumentId: number;

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 for release', referenceFiles: [FIBRES.nylon66Reference] });
  operator = await agent(['operator']);
  verifier = await agent(['verifier']);
  qa = await agent(['qa_manager']);
  ({ instrumentId } = await instrumentWithCheck('valid'));
});

afterAll(async () => {
  await flushMail();
  await retire();
});

/** A lot received, sampled, measured (every container passes), performed and verified. */
async function testedLot(files: string[] = FIBRES.nylon66Samples.slice(0, 2), extra: Record<string, unknown> = {}) {
  const lot = await receiveLot(operator.agent, nylon.materialId, files.length, extra);
  const testId = await startTest(operator.agent, lot.id, instrumentId);
  for (const [i, f] of files.entries()) await upload(operator.agent, testId, { containerId: lot.containers[i].id }, f);
  const p = await operator.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(operator.user) });
  expect(p.status).toBe(200);
  const v = await verifier.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(verifier.user) });
  expect(v.status).toBe(200);
  return { lot, testId, outcome: v.body.outcome as string };
}

async function recordChecks(lotId: number, outcome = 'conforms') {
  for (const checkKey of ['coa-review', 'appearance']) {
    const r = await qa.agent.post(`/api/lots/${lotId}/checks`).send({
      checkKey,
      outcome,
      reference: checkKey === 'coa-review' ? 'CoA 24-1187' : null,
      signature: sig(qa.user),
    });
    expect(r.status).toBe(201);
  }
}

describe('release', () => {
  it('is refused while any condition is open, naming each; then released with a signature and a retest date', async () => {
    const { lot } = await testedLot();
    // no profile yet: no checklist and no retest interval
    const noProfile = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(noProfile.status).toBe(409);
    expect(noProfile.body.error.code).toBe('RELEASE_CONDITIONS_OPEN');
    expect(noProfile.body.error.details.open).toEqual(expect.arrayContaining(['profile', 'checks']));
    await profileFor(nylon.materialId);
    const noChecks = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(noChecks.status).toBe(409);
    expect(noChecks.body.error.details.open).toEqual(['checks']);
    expect(noChecks.body.error.message).toMatch(/CoA reviewed against the specification/);
    await recordChecks(lot.id, 'does-not-conform');
    const bad = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(bad.body.error.details.open).toEqual(['checks']);
    await recordChecks(lot.id);
    const view = (await qa.agent.get(`/api/lots/${lot.id}/disposition`)).body;
    expect(view.releasable).toBe(true);
    expect(view.caution).toMatch(/support, and do not replace/);
    const ok = await qa.agent
      .post(`/api/lots/${lot.id}/release`)
      .send({ comment: 'All conditions met.', signature: sig(qa.user) });
    expect(ok.status).toBe(200);
    expect(ok.body.status).toBe('released');
    const d = ok.body.disposition;
    expect(d.decision).toBe('released');
    expect(d.signature.meaning).toBe('released');
    expect(d.certificateNumber).toMatch(/\S/);
    const today = new Date();
    const expected = new Date(Date.UTC(today.getUTCFullYear() + 2, today.getUTCMonth(), 1));
    expect(d.retestDate.slice(0, 7)).toBe(expected.toISOString().slice(0, 7)); // 24 months of the profile
    const detail = (await qa.agent.get(`/api/lots/${lot.id}`)).body;
    expect(detail.containers.map((c: { status: string }) => c.status)).toEqual(['released', 'released']);
    const ev = (await db()('audit_event')
      .where({ action: 'lot.released', entity_id: String(lot.id) })
      .first())!;
    expect(JSON.parse(ev.after_json!).retestDate).toBe(d.retestDate);
    // the release record is not the certificate: the certificate stays a statement of identity
    const cert = await db()('certificate').where({ lot_id: lot.id }).first();
    expect(cert).toBeDefined();
    expect(await db()('lot_disposition').where({ lot_id: lot.id }).first()).toMatchObject({ decision: 'released' });
    expect((await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) })).status).toBe(409);
  });

  it('is refused while an investigation is open and the identity failed', async () => {
    await profileFor(nylon.materialId);
    const { lot, outcome } = await testedLot([FIBRES.nylon66Samples[0], FIBRES.petSample]);
    expect(outcome).toBe('failed');
    await recordChecks(lot.id);
    const res = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.details.open).toEqual(expect.arrayContaining(['identity', 'investigations']));
    const detail = (await qa.agent.get(`/api/lots/${lot.id}`)).body;
    expect(detail.containers.map((c: { status: string }) => c.status)).toEqual(['sampled', 'blocked']);
    // a rejection outside the investigation is refused too: QA decides it there
    const rej = await qa.agent
      .post(`/api/lots/${lot.id}/reject`)
      .send({ reason: 'Mix-up suspected, rejected.', signature: sig(qa.user) });
    expect(rej.status).toBe(409);
  });

  it('is refused when the source was blocked after receipt', async () => {
    await profileFor(nylon.materialId);
    const { supplierId, sourceId } = await supplierFor(nylon.materialId, { fresh: true });
    const { lot } = await testedLot(FIBRES.nylon66Samples.slice(0, 1), { supplierId });
    await recordChecks(lot.id);
    const fq = await fixtureQaAgent();
    const b = await fq.agent.post(`/api/sources/${sourceId}/status`).send({
      status: 'blocked',
      samplingPlan: 'every-container',
      effectiveFrom: new Date().toISOString().slice(0, 10),
      reason: 'Recall notice from the supplier',
      signature: sig(fq.user),
    });
    expect(b.status).toBe(200);
    const res = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.details.open).toEqual(['source']);
  });

  it('is refused to a QA manager who did lab work on the lot (verifier and QA manager in one account)', async () => {
    await profileFor(nylon.materialId);
    const both = await agent(['verifier', 'qa_manager']);
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const testId = await startTest(operator.agent, lot.id, instrumentId);
    await upload(operator.agent, testId, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[2]);
    await operator.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(operator.user) });
    expect((await both.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(both.user) })).status).toBe(200);
    await recordChecks(lot.id);
    const res = await both.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(both.user) });
    expect(res.status).toBe(403);
    expect(res.body.error.message).toMatch(/another QA manager/);
    expect(
      (await operator.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(operator.user) })).status,
    ).toBe(403);
  });

  it('the database refuses a release without a release record of the lot', async () => {
    const { lot } = await testedLot(FIBRES.nylon66Samples.slice(1, 2));
    await expect(db()('lot').where({ id: lot.id }).update({ status: 'released' })).rejects.toThrow(
      /released only through a signed release record/,
    );
  });
});

describe('rejection', () => {
  it('needs a reason, is signed, rejects every container and is final', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 2);
    const short = await qa.agent.post(`/api/lots/${lot.id}/reject`).send({ reason: 'bad', signature: sig(qa.user) });
    expect(short.status).toBe(400);
    const res = await qa.agent.post(`/api/lots/${lot.id}/reject`).send({
      reason: 'Certificate of analysis shows a water content above the specification.',
      signature: sig(qa.user),
    });
    expect(res.status).toBe(200);
    expect(res.body.status).toBe('rejected');
    expect(res.body.disposition).toMatchObject({ decision: 'rejected' });
    expect(res.body.disposition.signature.meaning).toBe('rejected');
    const detail = (await qa.agent.get(`/api/lots/${lot.id}`)).body;
    expect(detail.identityStatus).toBe('rejected');
    expect(detail.containers.map((c: { status: string }) => c.status)).toEqual(['rejected', 'rejected']);
    const again = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(again.status).toBe(409);
  });
});

describe('work queue', () => {
  it('lists lots awaiting disposition for QA, and lots to sample for the operator', async () => {
    const { lot } = await testedLot(FIBRES.nylon66Samples.slice(2, 3));
    const unsampled = await receiveLot(operator.agent, nylon.materialId, 1, { sample: false });
    // The shared test database holds more such lots than a section lists (50): ask for the section whole.
    const q = (await qa.agent.get('/api/work-queue?full=lots-awaiting-disposition')).body;
    const awaiting = q.sections.find((s: { key: string }) => s.key === 'lots-awaiting-disposition');
    expect(awaiting.items.map((i: { id: number }) => i.id)).toContain(lot.id);
    expect(awaiting.items).toHaveLength(awaiting.count);
    const capped = (await qa.agent.get('/api/work-queue')).body.sections.find(
      (s: { key: string }) => s.key === 'lots-awaiting-disposition',
    );
    expect(capped.count).toBe(awaiting.count);
    expect(capped.items).toHaveLength(Math.min(50, awaiting.count));
    const o = (await operator.agent.get('/api/work-queue?full=lots-to-sample')).body;
    const toSample = o.sections.find((s: { key: string }) => s.key === 'lots-to-sample');
    expect(toSample.items.map((i: { id: number }) => i.id)).toContain(unsampled.id);
    const toTest = (await operator.agent.get('/api/work-queue?full=lots-to-test')).body.sections.find(
      (s: { key: string }) => s.key === 'lots-to-test',
    );
    expect(toTest.items.map((i: { id: number }) => i.id)).not.toContain(unsampled.id);
  });
});
