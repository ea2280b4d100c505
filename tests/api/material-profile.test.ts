/**
 * Material master for disposition (issue 14 item 2) against the real MariaDB: retest interval,
 * shelf life, risk class and the release checks QA defines, versioned and signed.
 * Rules: retest dates come from the material's retest interval (21 CFR 211.87: retest after
 * storage; ICH Q7 para 11.6 retest date, from memory); every QA change is e-signed (21 CFR 11.50);
 * master records are never overwritten (a change is a new version).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { db, ownerDb, sig, untyped } from './helpers';
import { agent, approvedMaterial, FIBRES, flushMail, retire, type ApprovedMaterial } from './fixtures-testing';

let mat: ApprovedMaterial;
let qa: Awaited<ReturnType<typeof agent>>;
let operator: Awaited<ReturnType<typeof agent>>;

beforeAll(async () => {
  mat = await approvedMaterial({ name: 'Nylon 6,6 with a profile', referenceFiles: [FIBRES.nylon66Reference] });
  qa = await agent(['qa_manager']);
  operator = await agent(['operator']);
});

afterAll(async () => {
  await flushMail();
  await retire();
});

const body = (over: Record<string, unknown> = {}) => ({
  retestMonths: 24,
  shelfLifeMonths: 36,
  riskClass: 'medium',
  checks: [
    { key: 'coa-review', kind: 'coa-review', label: 'CoA reviewed against specification SPEC-NY-01' },
    { key: 'appearance', kind: 'appearance', label: 'White staple fibre, no foreign matter' },
  ],
  reason: 'Initial disposition profile',
  signature: sig(qa.user),
  ...over,
});

describe('material profile', () => {
  it('QA approves versions with an e-signature; each change is a new version, audited with before and after', async () => {
    const v1 = await qa.agent.post(`/api/material-profiles/${mat.materialId}`).send(body());
    expect(v1.status).toBe(201);
    expect(v1.body.current).toMatchObject({ version: 1, retestMonths: 24, riskClass: 'medium' });
    expect(v1.body.current.signature.meaning).toBe('material-profile-approved');
    const v2 = await qa.agent
      .post(`/api/material-profiles/${mat.materialId}`)
      .send(body({ retestMonths: 12, riskClass: 'high', reason: 'Hygroscopic: shorter retest interval' }));
    expect(v2.status).toBe(201);
    expect(v2.body.history.map((h: { version: number }) => h.version)).toEqual([1, 2]);
    expect(v2.body.current.retestMonths).toBe(12);
    const ev = await db()('audit_event')
      .where({ action: 'material.profile-approved', entity_id: String(mat.materialId) })
      .orderBy('id', 'desc')
      .first();
    expect(JSON.parse(ev!.before_json!).retestMonths).toBe(24);
    expect(JSON.parse(ev!.after_json!).retestMonths).toBe(12);
    expect(ev!.reason).toMatch(/Hygroscopic/);
  });

  it('refuses an operator, a retest interval longer than the shelf life and two checks with one key', async () => {
    expect((await operator.agent.post(`/api/material-profiles/${mat.materialId}`).send(body())).status).toBe(403);
    const long = await qa.agent
      .post(`/api/material-profiles/${mat.materialId}`)
      .send(body({ retestMonths: 48, shelfLifeMonths: 36 }));
    expect(long.status).toBe(400);
    expect(long.body.error.message).toMatch(/longer than the shelf life/);
    const dup = await qa.agent.post(`/api/material-profiles/${mat.materialId}`).send(
      body({
        checks: [
          { key: 'coa', kind: 'coa-review', label: 'CoA one' },
          { key: 'coa', kind: 'appearance', label: 'CoA two' },
        ],
      }),
    );
    expect(dup.status).toBe(400);
  });

  it('the database refuses an unknown risk class and any change of a stored version', async () => {
    const row = (await db()('material_profile').where({ material_id: mat.materialId }).first())!;
    await expect(
      untyped(db(), 'material_profile').insert({ ...row, id: undefined, version: 99, risk_class: 'extreme' }),
    ).rejects.toThrow(/material_profile_values/);
    const owner = ownerDb();
    try {
      await expect(
        untyped(owner, 'material_profile').where({ id: row.id }).update({ retest_months: 120 }),
      ).rejects.toThrow(/append-only/);
    } finally {
      await owner.destroy();
    }
  });
});
