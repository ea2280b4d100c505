/**
 * Sampling record and container status (issue 14 items 3 and 4) against the real MariaDB and the
 * real engine with real spectra from ../shared/reference-data (fixtures-testing.ts).
 *
 * Rules checked and their sources:
 * - sampling precedes testing; each lot is held until sampled, tested and released
 *   (21 CFR 211.84(a)); samples are taken after receipt (FDA CGMP Q&A on sampling);
 * - containers are opened, sampled and resealed so as to prevent contamination (21 CFR 211.84(c)(1)-(2));
 * - every container is sampled unless a validated reduced procedure exists (EU GMP Annex 8 para 2),
 *   and the reduced n plan samples ceil(1 + sqrt(N)) containers (WHO TRS 929 Annex 4, 5.1);
 * - status labels: the container's status is identifiable (EU GMP Ch. 5 para 5.30 and 5.31,
 *   quarantine, released, rejected status of starting materials, from memory).
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { issueCertificate } from '../../server/modules/certificates';
import { binaryBody, db, sig } from './helpers';
import {
  agent,
  approvedMaterial,
  FIBRES,
  fixtureSampler,
  flushMail,
  instrumentWithCheck,
  receiveLot,
  retire,
  sampleLot,
  startTest,
  supplierFor,
  upload,
  uploadRequest,
  type ApprovedMaterial,
} from './fixtures-testing';

let nylon: ApprovedMaterial;
let operator: Awaited<ReturnType<typeof agent>>;
let instrumentId: number;

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 for sampling', referenceFiles: [FIBRES.nylon66Reference] });
  operator = await agent(['operator']);
  ({ instrumentId } = await instrumentWithCheck('valid'));
});

afterAll(async () => {
  await flushMail();
  await retire();
});

async function clear(lotId: number) {
  const s = await fixtureSampler();
  const res = await s.agent
    .post(`/api/lots/${lotId}/line-clearance`)
    .send({ area: 'Booth 2', previousUse: 'Lot of maize starch, removed', signature: sig(s.user) });
  expect(res.status).toBe(201);
  return { s, clearanceId: res.body.clearances.at(-1).id as number };
}

const samplingBody = (clearanceId: number, ids: number[], over: Record<string, unknown> = {}) => ({
  lineClearanceId: clearanceId,
  sampledAt: new Date().toISOString(),
  tool: 'sampling spear ST-04',
  containers: ids.map((containerId) => ({ containerId, opened: true, sampled: true, resealed: true })),
  reserve: { quantity: 20, unit: 'g', location: 'Reserve store R1' },
  ...over,
});

describe('sampling precedes testing', () => {
  it('refuses to start a test on a lot that was not sampled', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 2, { sample: false });
    const res = await operator.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/not been sampled/);
  });

  it('refuses sampling without a line clearance, an unfinished container, and too few containers', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 3, { sample: false });
    const ids = lot.containers.map((c) => c.id);
    const s = await fixtureSampler();
    const noClear = await s.agent
      .post(`/api/lots/${lot.id}/sampling`)
      .send({ ...samplingBody(999999, ids), signature: sig(s.user) });
    expect(noClear.status).toBe(422);
    expect(noClear.body.error.code).toBe('NO_LINE_CLEARANCE');
    const { clearanceId } = await clear(lot.id);
    const unsealed = samplingBody(clearanceId, ids);
    unsealed.containers[1].resealed = false;
    const r1 = await s.agent.post(`/api/lots/${lot.id}/sampling`).send({ ...unsealed, signature: sig(s.user) });
    expect(r1.status).toBe(422);
    expect(r1.body.error.message).toMatch(/not recorded as resealed/);
    const r2 = await s.agent
      .post(`/api/lots/${lot.id}/sampling`)
      .send({ ...samplingBody(clearanceId, ids.slice(0, 2)), signature: sig(s.user) });
    expect(r2.status).toBe(422);
    expect(r2.body.error.code).toBe('TOO_FEW_SAMPLED');
    expect(r2.body.error.message).toMatch(/Every container is sampled \(EU GMP Annex 8 para 2\)/);
    expect(await db()('sampling_record').where({ lot_id: lot.id }).first()).toBeUndefined();
  });

  it('records sampler, area, time, tool, reserve samples and each container; signed, audited; containers become sampled', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 2, { sample: false });
    const { s, clearanceId } = await clear(lot.id);
    const res = await s.agent.post(`/api/lots/${lot.id}/sampling`).send({
      ...samplingBody(
        clearanceId,
        lot.containers.map((c) => c.id),
      ),
      signature: sig(s.user),
    });
    expect(res.status).toBe(201);
    expect(res.body.record).toMatchObject({
      area: 'Booth 2',
      tool: 'sampling spear ST-04',
      reserve: { quantity: 20, unit: 'g', location: 'Reserve store R1' },
      sampler: { id: s.user.id },
      samplingPlan: 'every-container',
    });
    expect(res.body.record.signature.meaning).toBe('sampled');
    expect(res.body.record.lineClearance.signature.meaning).toBe('line-cleared');
    expect(res.body.containers.map((c: { status: string }) => c.status)).toEqual(['sampled', 'sampled']);
    expect(res.body.containers[0].history.map((h: { status: string }) => h.status)).toEqual(['quarantine', 'sampled']);
    const again = await s.agent.post(`/api/lots/${lot.id}/sampling`).send({
      ...samplingBody(
        clearanceId,
        lot.containers.map((c) => c.id),
      ),
      signature: sig(s.user),
    });
    expect(again.status).toBe(409);
    const ev = await db()('audit_event')
      .where({ action: 'lot.sampled', entity_id: String(lot.id) })
      .first();
    expect(JSON.parse(ev!.after_json!).containers).toHaveLength(2);
  });
});

describe('a reduced plan', () => {
  it('samples 1 + sqrt(N) containers; an unsampled container cannot be measured (service and database)', async () => {
    const { supplierId } = await supplierFor(nylon.materialId, {
      status: 'qualified',
      samplingPlan: 'sqrt-n-plus-1',
      samplingJustification: 'Validated: sealed drums direct from the producer, 30 lots concordant on every container.',
    });
    const lot = await receiveLot(operator.agent, nylon.materialId, 4, { supplierId, sample: false });
    const detail = (await operator.agent.get(`/api/lots/${lot.id}`)).body;
    expect(detail.source).toMatchObject({ samplingPlan: 'sqrt-n-plus-1', sampleCount: 3 }); // ceil(1 + sqrt 4) = 3
    await sampleLot(
      lot.id,
      lot.containers.slice(0, 3).map((c) => c.id),
    );
    const testId = await startTest(operator.agent, lot.id, instrumentId);
    const unsampled = lot.containers[3];
    const res = await uploadRequest(operator.agent, testId, { label: unsampled.label }, FIBRES.nylon66Samples[0]);
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('CONTAINER_NOT_SAMPLED');
    const match = await operator.agent
      .post(`/api/tests/${testId}/match-files`)
      .send({ fileNames: [`${unsampled.label}.csv`, `${lot.containers[0].label}.csv`] });
    expect(match.body.map((m: { status: string }) => m.status)).toEqual(['not-sampled', 'matched']);
    // the database refuses it too
    const m = (await db()('measurement').orderBy('id', 'desc').first())!;
    await expect(
      db()('measurement').insert({ ...m, id: undefined, container_id: unsampled.id, test_id: testId }),
    ).rejects.toThrow(/not sampled/);
    // every SAMPLED container measured: the test can be signed performed
    for (const [i, c] of lot.containers.slice(0, 3).entries())
      await upload(operator.agent, testId, { label: c.label }, FIBRES.nylon66Samples[i]);
    const perform = await operator.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(operator.user) });
    expect(perform.status).toBe(200);
    const verifier = await agent(['verifier']);
    const v = await verifier.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(verifier.user) });
    expect(v.status).toBe(200);
    expect(v.body.outcome).toBe('passed');
    // the certificate covers the sampled containers and says so
    const cert = await issueCertificate(db(), { lotId: lot.id, testId, actor: { id: null, name: 't' } });
    const row = (await db()('certificate').where({ id: cert.id }).first('pdf'))!;
    const file = path.join(os.tmpdir(), `reduced-${lot.id}.pdf`);
    fs.writeFileSync(file, row.pdf);
    const text = execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' }).replace(/\s+/g, ' ');
    expect(text).toMatch(/3 sampled containers \(of 4\)/);
    expect(text).toMatch(/Reduced sampling: 3 of 4 containers were sampled/);
    expect(text).not.toContain(unsampled.label);
  });
});

describe('status labels', () => {
  it('prints the current status of every container as a PDF, audited', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 2);
    const res = await operator.agent.get(`/api/lots/${lot.id}/status-labels.pdf`).buffer(true).parse(binaryBody);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    expect((res.body as Buffer).subarray(0, 5).toString()).toBe('%PDF-');
    const ev = await db()('audit_event')
      .where({ action: 'lot.status-labels-printed', entity_id: String(lot.id) })
      .first();
    expect(JSON.parse(ev!.after_json!).labels).toEqual([
      `${lot.containers[0].label} sampled`,
      `${lot.containers[1].label} sampled`,
    ]);
  });
});
