/**
 * Container status "blocked" (issue 14 item 4) decided in one place (server/modules/lots/state.ts),
 * against the real MariaDB and the real engine with real spectra from ../shared/reference-data.
 *
 * Rules checked and their sources:
 * - each container carries its status (quarantine, sampled, released, rejected) and is blocked
 *   while something holds it (issue 14 item 4; EU GMP Part I 5.33 on quarantine status of
 *   starting materials, from memory);
 * - a container blocked by the provenance rule (too many invalid measurements,
 *   docs/provenance.md) or held by an open investigation shows "blocked" and stops the release;
 * - QA's release of the block returns it to its status before the block (issue 14 item 4 as
 *   briefed: "releasing the block returns it to its former status").
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { binaryBody, db, sig } from './helpers';
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

let nylon: ApprovedMaterial;
let operator: Awaited<ReturnType<typeof agent>>;
let verifier: Awaited<ReturnType<typeof agent>>;
let qa: Awaited<ReturnType<typeof agent>>;
let instrumentId: number;

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 container status', referenceFiles: [FIBRES.nylon66Reference] });
  operator = await agent(['operator']);
  verifier = await agent(['verifier']);
  qa = await agent(['qa_manager']);
  ({ instrumentId } = await instrumentWithCheck('valid'));
  await profileFor(nylon.materialId);
});

afterAll(async () => {
  await flushMail();
  await retire();
});

const statuses = async (lotId: number) =>
  (await qa.agent.get(`/api/lots/${lotId}`)).body.containers.map((c: { status: string }) => c.status);

async function labelsPrinted(lotId: number): Promise<string[]> {
  const res = await operator.agent.get(`/api/lots/${lotId}/status-labels.pdf`).buffer(true).parse(binaryBody);
  expect(res.status).toBe(200);
  const ev = (await db()('audit_event')
    .where({ action: 'lot.status-labels-printed', entity_id: String(lotId) })
    .orderBy('id', 'desc')
    .first())!;
  return JSON.parse(ev.after_json!).labels;
}

describe('a container blocked by the provenance rule', () => {
  it('shows "blocked" on the lot, its sampling view and its label, stops the release, and returns to "sampled" when QA releases the block', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 2);
    const [c1, c2] = lot.containers;
    const testId = await startTest(operator.agent, lot.id, instrumentId);
    expect(await statuses(lot.id)).toEqual(['sampled', 'sampled']);
    for (let i = 0; i < 3; i++)
      expect((await upload(operator.agent, testId, { containerId: c1.id }, FIBRES.weakAcrylic)).verdict).toBe(
        'invalid',
      );

    expect(await statuses(lot.id)).toEqual(['blocked', 'sampled']);
    const sampling = (await qa.agent.get(`/api/lots/${lot.id}/sampling`)).body;
    const entry = sampling.containers.find((c: { containerId: number }) => c.containerId === c1.id);
    expect(entry.status).toBe('blocked');
    expect(entry.heldBy.join(' ')).toMatch(/3 invalid measurements/);
    expect(entry.history.at(-1).status).toBe('blocked');
    expect(await labelsPrinted(lot.id)).toEqual([`${c1.label} blocked`, `${c2.label} sampled`]);

    // the release is refused, naming the blocked container
    const view = (await qa.agent.get(`/api/lots/${lot.id}/disposition`)).body;
    const cond = view.conditions.find((c: { key: string }) => c.key === 'containers');
    expect(cond.met).toBe(false);
    expect(cond.detail).toContain(c1.label);
    const rel = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(rel.status).toBe(409);
    expect(rel.body.error.details.open).toEqual(expect.arrayContaining(['containers']));

    // QA releases the block: back to its former status, with a row (and label) of the change
    const free = await qa.agent
      .post(`/api/containers/${c1.id}/release`)
      .send({ reason: 'ATR crystal cleaned and clamp pressure checked; measure again.', signature: sig(qa.user) });
    expect(free.status).toBe(200);
    expect(await statuses(lot.id)).toEqual(['sampled', 'sampled']);
    const after = (await qa.agent.get(`/api/lots/${lot.id}/sampling`)).body.containers.find(
      (c: { containerId: number }) => c.containerId === c1.id,
    );
    expect(after.heldBy).toEqual([]);
    expect(after.history.map((h: { status: string }) => h.status)).toEqual([
      'quarantine',
      'sampled',
      'blocked',
      'sampled',
    ]);
    expect(after.history.at(-1).reason).toMatch(/Block released by QA/);
    const cond2 = (await qa.agent.get(`/api/lots/${lot.id}/disposition`)).body.conditions.find(
      (c: { key: string }) => c.key === 'containers',
    );
    expect(cond2.met).toBe(true);

    // the lot goes on: measured, performed, verified; then released with both containers released
    await upload(operator.agent, testId, { containerId: c1.id }, FIBRES.nylon66Samples[0]);
    await upload(operator.agent, testId, { containerId: c2.id }, FIBRES.nylon66Samples[1]);
    expect(
      (await operator.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(operator.user) })).status,
    ).toBe(200);
    expect(
      (await verifier.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(verifier.user) })).status,
    ).toBe(200);
    for (const checkKey of ['coa-review', 'appearance'])
      expect(
        (
          await qa.agent.post(`/api/lots/${lot.id}/checks`).send({
            checkKey,
            outcome: 'conforms',
            reference: checkKey === 'coa-review' ? 'CoA 25-0412' : null,
            signature: sig(qa.user),
          })
        ).status,
      ).toBe(201);
    const ok = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(ok.status).toBe(200);
    expect(await statuses(lot.id)).toEqual(['released', 'released']);
  });
});

describe('a container held by an open investigation', () => {
  it('shows "blocked" with the investigation named, and the release is refused', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 2);
    const testId = await startTest(operator.agent, lot.id, instrumentId);
    await upload(operator.agent, testId, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[2]);
    await upload(operator.agent, testId, { containerId: lot.containers[1].id }, FIBRES.petSample);
    await operator.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(operator.user) });
    const v = await verifier.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(verifier.user) });
    expect(v.body.outcome).toBe('failed');
    expect(await statuses(lot.id)).toEqual(['sampled', 'blocked']);
    const entry = (await qa.agent.get(`/api/lots/${lot.id}/sampling`)).body.containers[1];
    expect(entry.heldBy.join(' ')).toMatch(/held by investigation INV-/);
    const rel = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(rel.status).toBe(409);
    expect(rel.body.error.details.open).toEqual(expect.arrayContaining(['containers', 'investigations']));
  });
});
