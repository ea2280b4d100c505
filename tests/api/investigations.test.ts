/**
 * Failing containers: automatic investigation with the library mix-up hint, QA's phase I
 * laboratory check, invalidation with an authorised retest or confirmation with rejection, and
 * the retest rule. Real MariaDB, real engine, real spectra from ../shared/reference-data: a
 * polyester (PET) fibre spectrum in a lot of nylon 6,6 is a genuine mix-up; the engine fails it
 * and the library search over all approved materials names polyester first.
 *
 * Sources: FDA guidance "Investigating Out-of-Specification (OOS) Test Results for
 * Pharmaceutical Production" (Oct 2006, Rev. 1 May 2022): phase I laboratory investigation;
 * a result is invalidated only for a documented, assignable laboratory error approved by the
 * quality unit; no retesting into compliance (US v. Barr Laboratories, 1993); all data,
 * including invalidated results, stay on record (21 CFR 211.192, 211.194).
 * EU GMP Annex 8 para 2 / 21 CFR 211.84: identity of every container; the lot stays in quarantine.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sha256Hex } from '../../server/lib/canonical';
import { capturedMail } from '../../server/lib/fake-smtp';
import { db, sig } from './helpers';
import {
  agent,
  approvedMaterial,
  FIBRES,
  flushMail,
  retire,
  REFERENCE_DATA,
  instrumentWithCheck,
  receiveLot,
  startTest,
  upload,
  uploadRequest,
  type ApprovedMaterial,
} from './fixtures-testing';

type Signed = Awaited<ReturnType<typeof agent>>;

let nylon: ApprovedMaterial;
let instrumentId: number;
let olga: Signed;
let victor: Signed;
let quinn: Signed;

const phase1 = (overrides: Record<string, unknown> = {}) => ({
  instrument: { ok: true, note: 'Instrument check of the day valid; crystal cleaned and background fresh.' },
  sampleHandling: { ok: true, note: 'Sample taken from the labelled drum; no contamination seen.' },
  method: { ok: true, note: 'Approved method version 1 and reference set used.' },
  data: { ok: true, note: 'File name and title match the container label.' },
  summary: 'Laboratory check completed; see the points above.',
  ...overrides,
});

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 technical yarn', referenceFiles: [FIBRES.nylon66Reference] });
  // a polyester material in the library, so that the mix-up hint has one to name
  await approvedMaterial({ name: 'Polyester PET technical yarn', referenceFiles: [FIBRES.petReference] });
  instrumentId = (await instrumentWithCheck('valid')).instrumentId;
  olga = await agent(['operator']);
  victor = await agent(['verifier']);
  quinn = await agent(['qa_manager']);
});

afterAll(async () => {
  await flushMail();
  await retire();
});

/** Whether a reference was made from one of the real polyester (PET) fibre spectra. */
async function isPolyesterReference(code: string): Promise<boolean> {
  const ref = (await db()('reference_spectrum').where({ code }).first())!;
  const file = (await db()('stored_file').where({ id: ref.file_id }).first())!;
  const dir = path.join(REFERENCE_DATA, 'atr-ftir-fibres');
  return fs
    .readdirSync(dir)
    .filter((f) => f.startsWith('polyester-PET'))
    .some((f) => sha256Hex(fs.readFileSync(path.join(dir, f))) === file.sha256);
}

/** 3 containers: two nylon, container 003 holds polyester. Measured, performed and verified. */
async function failedLot() {
  const lot = await receiveLot(olga.agent, nylon.materialId, 3);
  const testId = await startTest(olga.agent, lot.id, instrumentId);
  await upload(olga.agent, testId, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[0]);
  await upload(olga.agent, testId, { containerId: lot.containers[1].id }, FIBRES.nylon66Samples[1]);
  const bad = await upload(olga.agent, testId, { containerId: lot.containers[2].id }, FIBRES.petSample);
  expect((await olga.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(olga.user) })).status).toBe(200);
  const v = await victor.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(victor.user) });
  expect(v.status).toBe(200);
  return { lot, testId, bad, verify: v.body };
}

describe('a failing container', () => {
  it('fails as nylon, keeps the lot in quarantine and opens an investigation with the library hint; QA is mailed', async () => {
    const lot = await receiveLot(olga.agent, nylon.materialId, 3);
    const testId = await startTest(olga.agent, lot.id, instrumentId);
    await upload(olga.agent, testId, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[0]);
    await upload(olga.agent, testId, { containerId: lot.containers[1].id }, FIBRES.nylon66Samples[1]);
    const bad = await upload(olga.agent, testId, { containerId: lot.containers[2].id }, FIBRES.petSample);
    expect(bad.verdict).toBe('fail');
    // the operator already sees the mix-up hint on the measurement
    const m = await olga.agent.get(`/api/measurements/${bad.id}`);
    // The test database is shared with other files, whose approved libraries may hold other
    // materials made from polyester spectra: the first hint must be a polyester reference.
    const first = m.body.result.libraryHint[0];
    expect(first.isTestedMaterial).toBe(false);
    expect(first.score).toBeGreaterThan(0.99);
    expect(await isPolyesterReference(first.referenceCode)).toBe(true);
    expect(m.body.result.libraryHintText).toMatch(/^Closest approved materials: /);
    expect(m.body.result.libraryHintText).toContain(first.materialName);

    // retest rule inside the attempt: the failed container cannot simply be measured again
    const again = await uploadRequest(
      olga.agent,
      testId,
      { containerId: lot.containers[2].id },
      FIBRES.nylon66Samples[2],
    );
    expect(again.status).toBe(409);
    expect(again.body.error.code).toBe('RETEST_NEEDS_QA');
    const preview = await olga.agent
      .post(`/api/tests/${testId}/match-files`)
      .send({ fileNames: [`${lot.containers[2].label}.csv`] });
    expect(preview.body[0].status).toBe('failed-needs-qa');

    expect((await olga.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(olga.user) })).status).toBe(
      200,
    );
    const v = await victor.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(victor.user) });
    expect(v.body.outcome).toBe('failed');
    expect(v.body.investigation.number).toMatch(/^INV-\d{4}-\d{4}$/);
    const lotNow = await olga.agent.get(`/api/lots/${lot.id}`);
    expect(lotNow.body).toMatchObject({
      status: 'quarantine',
      identityStatus: 'failed',
      certificate: { state: 'none' },
    });

    const inv = await quinn.agent.get(`/api/investigations/${v.body.investigation.id}`);
    expect(inv.body.status).toBe('open');
    expect(inv.body.failing).toHaveLength(1);
    expect(inv.body.failing[0]).toMatchObject({ label: lot.containers[2].label, measurementId: bad.id });
    expect(inv.body.failing[0].hintText).toBe(m.body.result.libraryHintText);
    expect(inv.body.failing[0].hint[0].referenceCode).toBe(first.referenceCode);
    expect(inv.body.failing[0].explanation.length).toBeGreaterThan(0);

    await flushMail();
    const toQuinn = `${quinn.user.username}@test.example`;
    const mail = capturedMail().find(
      (x) => x.subject.includes(v.body.investigation.number) && x.subject.includes('opened') && x.to.includes(toQuinn),
    );
    expect(mail).toBeDefined();
    expect(mail!.text).toContain(lot.containers[2].label);
    expect(mail!.text).toContain(first.materialName);

    // no new attempt without QA
    const start = await olga.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId });
    expect(start.status).toBe(409);
    expect(start.body.error.message).toMatch(/QA authorisation/);
    const qa = await quinn.agent.get('/api/work-queue?full=open-investigations');
    const open = qa.body.sections.find((s: { key: string }) => s.key === 'open-investigations');
    expect(open.items.map((i: { id: number }) => i.id)).toContain(v.body.investigation.id);
  });

  it('invalidated for an assignable laboratory cause: QA authorises a retest of the named container, originals stay', async () => {
    const { lot, bad, verify } = await failedLot();
    const invId = verify.investigation.id as number;
    const badRow = await db()('measurement').where({ id: bad.id }).first();

    // only QA records phase I and decides
    expect(
      (await olga.agent.post(`/api/investigations/${invId}/phase1`).send({ ...phase1(), signature: sig(olga.user) }))
        .status,
    ).toBe(403);
    // deciding before phase I is refused
    const early = await quinn.agent.post(`/api/investigations/${invId}/invalidate`).send({
      cause: 'sampleHandling',
      justification: 'x'.repeat(30),
      retestContainerIds: [lot.containers[2].id],
      signature: sig(quinn.user),
    });
    expect(early.status).toBe(409);

    const p1 = await quinn.agent.post(`/api/investigations/${invId}/phase1`).send({
      ...phase1({
        sampleHandling: {
          ok: false,
          note: 'Sample of drum 003 was taken into a vial previously used for a polyester thread; vial log shows no cleaning.',
        },
      }),
      signature: sig(quinn.user),
    });
    expect(p1.status).toBe(200);
    expect(p1.body.status).toBe('phase1-recorded');
    // a cause must be one where phase I found an error
    const noCause = await quinn.agent.post(`/api/investigations/${invId}/invalidate`).send({
      cause: 'instrument',
      justification: 'The instrument must have been wrong that day.',
      retestContainerIds: [lot.containers[2].id],
      signature: { password: quinn.user.password },
    });
    expect(noCause.status).toBe(422);
    expect(noCause.body.error.code).toBe('NO_ASSIGNABLE_CAUSE');
    // only failing containers can be named
    const notFailing = await quinn.agent.post(`/api/investigations/${invId}/invalidate`).send({
      cause: 'sampleHandling',
      justification: 'Contaminated sampling vial, see phase I.',
      retestContainerIds: [lot.containers[0].id],
      signature: { password: quinn.user.password },
    });
    expect(notFailing.status).toBe(422);

    const inv = await quinn.agent.post(`/api/investigations/${invId}/invalidate`).send({
      cause: 'sampleHandling',
      justification:
        'Contaminated sampling vial (phase I, sample handling). Re-sample drum 003 with a clean vial and retest.',
      retestContainerIds: [lot.containers[2].id],
      signature: { password: quinn.user.password },
    });
    expect(inv.status).toBe(200);
    expect(inv.body).toMatchObject({
      status: 'retest-authorised',
      decision: 'invalidated',
      retestContainerIds: [lot.containers[2].id],
    });
    expect(inv.body.signatures.map((s: { meaning: string }) => s.meaning)).toEqual([
      'phase-1-recorded',
      'result-invalidated',
    ]);
    expect((await olga.agent.get(`/api/lots/${lot.id}`)).body.identityStatus).toBe('retest-authorised');

    // the retest attempt covers only the authorised container
    const retestId = await startTest(olga.agent, lot.id, instrumentId);
    const retest = await olga.agent.get(`/api/tests/${retestId}`);
    expect(retest.body.retestOfInvestigationId).toBe(invId);
    expect(
      retest.body.containers.filter((c: { inScope: boolean }) => c.inScope).map((c: { id: number }) => c.id),
    ).toEqual([lot.containers[2].id]);
    const outOfScope = await uploadRequest(
      olga.agent,
      retestId,
      { containerId: lot.containers[0].id },
      FIBRES.nylon66Samples[0],
    );
    expect(outOfScope.status).toBe(422);
    expect(outOfScope.body.error.code).toBe('NOT_IN_SCOPE');
    // a second retest attempt cannot be started alongside
    expect((await olga.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId })).status).toBe(409);
    const first = await upload(olga.agent, retestId, { containerId: lot.containers[2].id }, FIBRES.nylon66Samples[1]);
    expect(first.verdict).toBe('pass');
    expect((await db()('measurement').where({ id: first.id }).first())!.authorised_by_investigation_id).toBe(invId);
    expect((await olga.agent.post(`/api/tests/${retestId}/perform`).send({ signature: sig(olga.user) })).status).toBe(
      200,
    );
    // a returned retest goes back to the QA authorisation: the next attempt is again a retest of container 003 only
    const back = await victor.agent
      .post(`/api/tests/${retestId}/return`)
      .send({ reason: 'The re-sample was taken before the vial log was signed.', signature: sig(victor.user) });
    expect(back.status).toBe(200);
    expect((await olga.agent.get(`/api/lots/${lot.id}`)).body.identityStatus).toBe('retest-authorised');
    const retest2 = await startTest(olga.agent, lot.id, instrumentId);
    const r2 = await olga.agent.get(`/api/tests/${retest2}`);
    expect(r2.body.retestOfInvestigationId).toBe(invId);
    expect(r2.body.containers.filter((c: { inScope: boolean }) => c.inScope).map((c: { id: number }) => c.id)).toEqual([
      lot.containers[2].id,
    ]);
    const re = await upload(olga.agent, retest2, { containerId: lot.containers[2].id }, FIBRES.nylon66Samples[2]);
    expect(re.verdict).toBe('pass');
    expect((await olga.agent.post(`/api/tests/${retest2}/perform`).send({ signature: sig(olga.user) })).status).toBe(
      200,
    );
    const v2 = await victor.agent
      .post(`/api/tests/${retest2}/verify`)
      .send({ signature: { password: victor.user.password } });
    expect(v2.body.outcome).toBe('passed');

    const lotAfter = await olga.agent.get(`/api/lots/${lot.id}`);
    expect(lotAfter.body.identityStatus).toBe('passed');
    expect(lotAfter.body.containers.map((c: { effective: { verdict: string } }) => c.effective.verdict)).toEqual([
      'pass',
      'pass',
      'pass',
    ]);
    // the original failing measurement is still there, unchanged
    expect(await db()('measurement').where({ id: bad.id }).first()).toEqual(badRow);
    const closed = await quinn.agent.get(`/api/investigations/${invId}`);
    expect(closed.body.status).toBe('closed');
    expect(closed.body.closedAt).not.toBeNull();
    await flushMail();
    expect(
      capturedMail().some(
        (x) =>
          x.subject.includes(closed.body.number) &&
          x.subject.includes('closed') &&
          x.to.includes(`${quinn.user.username}@test.example`),
      ),
    ).toBe(true);
    expect(
      capturedMail().some(
        (x) =>
          x.subject === `Retest authorised: lot ${lot.lotNumber}` &&
          x.to.includes(`${olga.user.username}@test.example`),
      ),
    ).toBe(true);
    const actions = (
      await db()('audit_event')
        .where({ entity_type: 'investigation', entity_id: String(invId) })
        .orderBy('id')
    ).map((e) => e.action);
    expect(actions).toEqual(
      expect.arrayContaining([
        'investigation.opened',
        'investigation.phase1-recorded',
        'investigation.result-invalidated',
        'investigation.closed',
      ]),
    );
  });

  it('confirmed: QA rejects the lot; no path leads to a retest afterwards', async () => {
    const { lot, testId, verify } = await failedLot();
    const invId = verify.investigation.id as number;
    expect(
      (await quinn.agent.post(`/api/investigations/${invId}/phase1`).send({ ...phase1(), signature: sig(quinn.user) }))
        .status,
    ).toBe(200);
    // a second phase I record is refused
    expect(
      (
        await quinn.agent
          .post(`/api/investigations/${invId}/phase1`)
          .send({ ...phase1(), signature: { password: quinn.user.password } })
      ).status,
    ).toBe(409);
    const shortJust = await quinn.agent
      .post(`/api/investigations/${invId}/confirm`)
      .send({ justification: 'bad', signature: { password: quinn.user.password } });
    expect(shortJust.status).toBe(400);
    const c = await quinn.agent.post(`/api/investigations/${invId}/confirm`).send({
      justification: 'No laboratory error found in phase I; drum 003 contains polyester, not nylon 6,6. Lot rejected.',
      signature: { password: quinn.user.password },
    });
    expect(c.status).toBe(200);
    expect(c.body).toMatchObject({ status: 'closed', decision: 'confirmed' });
    const lotNow = await olga.agent.get(`/api/lots/${lot.id}`);
    expect(lotNow.body).toMatchObject({ status: 'rejected', identityStatus: 'rejected' });
    // every road to a new result is closed
    expect((await olga.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId })).status).toBe(409);
    expect(
      (await uploadRequest(olga.agent, testId, { containerId: lot.containers[2].id }, FIBRES.nylon66Samples[0])).status,
    ).toBe(409);
    expect(
      (
        await quinn.agent.post(`/api/investigations/${invId}/invalidate`).send({
          cause: 'data',
          justification: 'Changed my mind about this lot entirely.',
          retestContainerIds: [lot.containers[2].id],
          signature: { password: quinn.user.password },
        })
      ).status,
    ).toBe(409);
    await flushMail();
    expect(
      capturedMail().some(
        (x) =>
          x.subject === `Investigation ${c.body.number} closed: lot ${lot.lotNumber} rejected` &&
          x.to.includes(`${quinn.user.username}@test.example`),
      ),
    ).toBe(true);
    const sigs = await db()('e_signature')
      .where({ entity_type: 'investigation', entity_id: String(invId) })
      .orderBy('id');
    expect(sigs.map((s) => s.meaning)).toEqual(['phase-1-recorded', 'failure-confirmed']);
    expect(sigs.every((s) => s.user_id === quinn.user.id)).toBe(true);
    expect(await db()('audit_event').where({ action: 'lot.rejected', entity_id: String(lot.id) })).toHaveLength(1);
  });

  it('a retest that fails again closes the first investigation and opens a new one', async () => {
    const { lot, verify } = await failedLot();
    const invId = verify.investigation.id as number;
    await quinn.agent.post(`/api/investigations/${invId}/phase1`).send({
      ...phase1({ data: { ok: false, note: 'The file attached to drum 003 may belong to another job.' } }),
      signature: sig(quinn.user),
    });
    const inv = await quinn.agent.post(`/api/investigations/${invId}/invalidate`).send({
      cause: 'data',
      justification: 'Wrong file attached to drum 003 (data check in phase I).',
      retestContainerIds: [lot.containers[2].id],
      signature: { password: quinn.user.password },
    });
    expect(inv.status).toBe(200);
    const retestId = await startTest(olga.agent, lot.id, instrumentId);
    expect((await upload(olga.agent, retestId, { containerId: lot.containers[2].id }, FIBRES.petSample)).verdict).toBe(
      'fail',
    );
    await olga.agent.post(`/api/tests/${retestId}/perform`).send({ signature: sig(olga.user) });
    const v = await victor.agent.post(`/api/tests/${retestId}/verify`).send({ signature: sig(victor.user) });
    expect(v.body.outcome).toBe('failed');
    expect(v.body.investigation.id).not.toBe(invId);
    expect((await quinn.agent.get(`/api/investigations/${invId}`)).body.status).toBe('closed');
    expect((await olga.agent.get(`/api/lots/${lot.id}`)).body.identityStatus).toBe('failed');
  });

  it('QA who measured the test cannot decide its investigation', async () => {
    const qaOp = await agent(['operator', 'qa_manager']);
    const lot = await receiveLot(qaOp.agent, nylon.materialId, 1);
    const testId = await startTest(qaOp.agent, lot.id, instrumentId);
    await upload(qaOp.agent, testId, { containerId: lot.containers[0].id }, FIBRES.petSample);
    await qaOp.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(qaOp.user) });
    const v = await victor.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(victor.user) });
    const res = await qaOp.agent
      .post(`/api/investigations/${v.body.investigation.id}/phase1`)
      .send({ ...phase1(), signature: { password: qaOp.user.password } });
    expect(res.status).toBe(403);
  });
});
