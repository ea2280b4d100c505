/**
 * Release of a lot whose material's identity is NOT tested by IR (issue 14 items 2 and 5, the
 * "IR not suitable" flag QA sets in the identity-method work, docs/methods.md), against the real
 * MariaDB.
 *
 * Rules checked and their sources:
 * - an identity test on every container is required before release (EU GMP Annex 8; 21 CFR
 *   211.84(d)(1)); where IR does not identify the material, another identity test replaces it and
 *   its recorded result (reference, result, who, when) stands in for the IR certificate (issue 14
 *   items 2 and 5);
 * - that result is a signed record (21 CFR 11.50) with the report it refers to;
 * - the IR path stays as it was: a lot of a material identified by IR needs its passed IR
 *   identity with a certificate, whatever else is recorded (docs/architecture.md, "Release by QA").
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { db, sig } from './helpers';
import {
  agent,
  approvedMaterial,
  FIBRES,
  fixtureQaAgent,
  flushMail,
  profileFor,
  receiveLot,
  retire,
  type ApprovedMaterial,
} from './fixtures-testing';

let flagged: ApprovedMaterial;
let irMaterial: ApprovedMaterial;
let operator: Awaited<ReturnType<typeof agent>>;
let qa: Awaited<ReturnType<typeof agent>>;

const CHECKS = [
  { key: 'coa-review', kind: 'coa-review', label: 'CoA reviewed against the specification' },
  { key: 'chem-identity', kind: 'alternative-identity', label: 'Identification reactions of the monograph' },
];

beforeAll(async () => {
  flagged = await approvedMaterial({ name: 'Salt without IR identity', referenceFiles: [FIBRES.nylon66Reference] });
  irMaterial = await approvedMaterial({
    name: 'Nylon 6,6 identified by IR',
    referenceFiles: [FIBRES.nylon66Reference],
  });
  operator = await agent(['operator']);
  qa = await agent(['qa_manager']);
  const fq = await fixtureQaAgent();
  const marked = await fq.agent.post(`/api/materials/${flagged.materialId}/ir-suitability`).send({
    suitable: false,
    replacementTest: 'Identification reactions of sodium and chloride of the monograph',
    reason: 'an ionic solid without usable mid-IR bands',
    signature: sig(fq.user),
  });
  expect(marked.status, JSON.stringify(marked.body)).toBe(201);
});

afterAll(async () => {
  await flushMail();
  await retire();
});

async function record(
  who: typeof operator,
  lotId: number,
  checkKey: string,
  outcome: string,
  reference: string | null,
) {
  return who.agent.post(`/api/lots/${lotId}/checks`).send({ checkKey, outcome, reference, signature: sig(who.user) });
}

describe('a material whose identity is not tested by IR', () => {
  it('needs a profile that names the replacing identity test', async () => {
    const res = await qa.agent.post(`/api/material-profiles/${flagged.materialId}`).send({
      retestMonths: 12,
      shelfLifeMonths: 36,
      riskClass: 'low',
      checks: CHECKS.slice(0, 1),
      reason: 'profile without the identity test',
      signature: sig(qa.user),
    });
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('IDENTITY_TEST_MISSING');
  });

  it("is released only on the replacing test's recorded conforming result (reference, result, who, when)", async () => {
    await profileFor(flagged.materialId, CHECKS);
    const lot = await receiveLot(operator.agent, flagged.materialId, 2);
    // QA's work queue lists it although no IR test will ever pass it
    const q = (await qa.agent.get('/api/work-queue?full=lots-awaiting-disposition')).body;
    const awaiting = q.sections.find((s: { key: string }) => s.key === 'lots-awaiting-disposition');
    expect(awaiting.items.map((i: { id: number }) => i.id)).toContain(lot.id);

    expect((await record(qa, lot.id, 'coa-review', 'conforms', 'CoA 77-0311')).status).toBe(201);
    // without the replacing test's result: refused, naming identity
    const none = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(none.status).toBe(409);
    expect(none.body.error.details.open).toEqual(['identity']);
    expect(none.body.error.message).toMatch(/replacing identity test/);
    // its result needs the report's reference
    const noRef = await record(operator, lot.id, 'chem-identity', 'conforms', null);
    expect(noRef.status).toBe(422);
    expect(noRef.body.error.code).toBe('REFERENCE_REQUIRED');
    // a result that does not conform keeps the release refused
    expect((await record(operator, lot.id, 'chem-identity', 'does-not-conform', 'QC report 2026-118')).status).toBe(
      201,
    );
    const bad = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(bad.status).toBe(409);
    expect(bad.body.error.details.open).toEqual(['identity']);
    // the database refuses the release too without a conforming result (lot guard, migration 145)
    expect(await db()('lot').where({ id: lot.id }).first('identity_status')).toMatchObject({
      identity_status: 'awaiting-testing',
    });

    const ok = await record(operator, lot.id, 'chem-identity', 'conforms', 'QC report 2026-119');
    expect(ok.status).toBe(201);
    const view = (await qa.agent.get(`/api/lots/${lot.id}/disposition`)).body;
    const identity = view.conditions.find((c: { key: string }) => c.key === 'identity');
    expect(identity).toMatchObject({ met: true });
    expect(identity.detail).toContain('QC report 2026-119');
    const rec = view.requiredChecks.find((c: { key: string }) => c.key === 'chem-identity').record;
    expect(rec).toMatchObject({ outcome: 'conforms', reference: 'QC report 2026-119' });
    expect(rec.recordedBy.id).toBe(operator.user.id);
    expect(Date.parse(rec.recordedAt)).toBeGreaterThan(Date.now() - 600_000);
    expect(rec.signature.meaning).toBe('check-recorded');

    const rel = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(rel.status, JSON.stringify(rel.body)).toBe(200);
    expect(rel.body.status).toBe('released');
    expect(rel.body.disposition.certificateNumber).toBeNull();
    const ev = await db()('audit_event')
      .where({ action: 'lot.released', entity_id: String(lot.id) })
      .first();
    const checks = JSON.parse(ev!.after_json!).checks;
    expect(checks).toEqual(
      expect.arrayContaining([expect.objectContaining({ key: 'chem-identity', outcome: 'conforms', checkId: rec.id })]),
    );
  });

  it('the database refuses to release such a lot without a conforming result of the replacing test', async () => {
    const lot = await receiveLot(operator.agent, flagged.materialId, 1);
    const [sigId] = await db()('e_signature').insert({
      user_id: qa.user.id,
      printed_name: 'probe',
      meaning: 'released',
      entity_type: 'lot',
      entity_id: String(lot.id),
      content_hash: '0'.repeat(64),
      signed_at: new Date(),
    });
    const [dispositionId] = await db()('lot_disposition').insert({
      lot_id: lot.id,
      decision: 'released',
      retest_date: '2030-01-01',
      conditions: '[]',
      signature_id: sigId,
      decided_by: qa.user.id,
      decided_at: new Date(),
    });
    await expect(
      db()('lot')
        .where({ id: lot.id })
        .update({ status: 'released', disposition_id: dispositionId, retest_date: '2030-01-01' }),
    ).rejects.toThrow(/only a lot whose identity passed, or .* whose replacing identity test conforms/);
  });
});

describe('a material identified by IR', () => {
  it('is not released on a recorded replacing identity result: its IR identity must pass', async () => {
    await profileFor(irMaterial.materialId, CHECKS);
    const lot = await receiveLot(operator.agent, irMaterial.materialId, 1);
    expect((await record(qa, lot.id, 'coa-review', 'conforms', 'CoA 77-0312')).status).toBe(201);
    expect((await record(operator, lot.id, 'chem-identity', 'conforms', 'QC report 2026-120')).status).toBe(201);
    const res = await qa.agent.post(`/api/lots/${lot.id}/release`).send({ signature: sig(qa.user) });
    expect(res.status).toBe(409);
    expect(res.body.error.details.open).toEqual(['identity']);
    expect(res.body.error.message).toMatch(/Identity passed, with a current identity certificate/);
  });
});
