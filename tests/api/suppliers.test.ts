/**
 * Supplier master (issue 14 item 1) against the real MariaDB.
 *
 * Rules checked and their sources:
 * - receipt only from an approved source; a blocked source is refused and the refusal audited
 *   (21 CFR 211.84(a): components held until approved; EU GMP Ch. 5 para 5.27 approved suppliers, from memory);
 * - a new source's first delivery: every container sampled and tested (EU GMP Annex 8 para 2-3:
 *   the supplier's status and history decide whether a reduced procedure may be validated);
 * - a reduced sampling plan only for a qualified source with a recorded validation justification
 *   (EU GMP Annex 8 para 2); its size ceil(1 + sqrt(N)) is the n plan of WHO TRS 929 Annex 4,
 *   section 5.1 (N = 20 gives 6, N = 50 gives 9: worked in that guidance's secondary quotes);
 * - every status change is e-signed (21 CFR 11.50) and kept as history (never overwritten).
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { plannedSampleCount } from '../../server/modules/suppliers/contract';
import { db, ownerDb, sig, untyped } from './helpers';
import {
  agent,
  approvedMaterial,
  FIBRES,
  fixtureQaAgent,
  flushMail,
  retire,
  supplierFor,
  type ApprovedMaterial,
} from './fixtures-testing';

let nylon: ApprovedMaterial;
let operator: Awaited<ReturnType<typeof agent>>;
let qa: Awaited<ReturnType<typeof fixtureQaAgent>>;

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 from several sources', referenceFiles: [FIBRES.nylon66Reference] });
  operator = await agent(['operator']);
  qa = await fixtureQaAgent();
});

afterAll(async () => {
  await flushMail();
  await retire();
});

const today = () => new Date().toISOString().slice(0, 10);
const receive = (supplierId: number, containerCount = 4, extra: Record<string, unknown> = {}) =>
  operator.agent.post('/api/lots').send({
    materialId: nylon.materialId,
    supplierId,
    supplierLot: 'SL-' + Math.random().toString(36).slice(2, 8),
    containerCount,
    receivedDate: today(),
    ...extra,
  });

const setStatus = (sourceId: number, body: Record<string, unknown>) =>
  qa.agent.post(`/api/sources/${sourceId}/status`).send({
    samplingPlan: 'every-container',
    effectiveFrom: today(),
    reason: 'supplier audit outcome',
    signature: sig(qa.user),
    ...body,
  });

describe('plan size', () => {
  it('samples ceil(1 + sqrt(N)) containers under the reduced plan (WHO TRS 929 Annex 4, 5.1)', () => {
    expect(plannedSampleCount('sqrt-n-plus-1', 20)).toBe(6);
    expect(plannedSampleCount('sqrt-n-plus-1', 50)).toBe(9);
    expect(plannedSampleCount('sqrt-n-plus-1', 2)).toBe(2); // never more than the lot has
    expect(plannedSampleCount('every-container', 50)).toBe(50);
  });
});

describe('supplier master', () => {
  it('records a supplier with a QA signature, and refuses a name with a direction override', async () => {
    const bad = await qa.agent
      .post('/api/suppliers')
      .send({ name: 'Harrowgate \u202Eslyt\u202C Ltd', kind: 'supplier', signature: sig(qa.user) });
    expect(bad.status).toBe(400);
    expect(bad.body.error.message).toMatch(/U\+202E/);
    const res = await qa.agent
      .post('/api/suppliers')
      .send({ name: 'Harrowgate Polymers (invented)', kind: 'both', signature: sig(qa.user) });
    expect(res.status).toBe(201);
    expect(res.body.code).toMatch(/^SUP-\d{4}$/);
    const s = await db()('e_signature')
      .where({ entity_type: 'supplier', entity_id: String(res.body.id) })
      .first();
    expect(s!.meaning).toBe('source-recorded');
    expect((await operator.agent.post('/api/suppliers').send({ name: 'X', kind: 'supplier' })).status).toBe(403);
  });

  it('refuses receipt from a supplier that is not an approved source of the material, audited', async () => {
    const other = await approvedMaterial({ name: 'Other grade', referenceFiles: [FIBRES.nylon66Reference] });
    const { supplierId } = await supplierFor(other.materialId, { fresh: true });
    const res = await receive(supplierId);
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('SOURCE_NOT_APPROVED');
    const ev = await db()('audit_event')
      .where({ action: 'lot.receipt-refused', actor_id: operator.user.id })
      .orderBy('id', 'desc')
      .first();
    expect(JSON.parse(ev!.after_json!).supplierId).toBe(supplierId);
  });

  it('refuses receipt from a blocked source, stores no lot and audits the refused attempt', async () => {
    const { supplierId, sourceId } = await supplierFor(nylon.materialId, { fresh: true });
    const blocked = await setStatus(sourceId, { status: 'blocked', reason: 'failed supplier audit' });
    expect(blocked.status).toBe(200);
    expect(blocked.body.current.status).toBe('blocked');
    expect(blocked.body.history.map((h: { status: string }) => h.status)).toEqual(['new', 'qualified', 'blocked']);
    const lots = Number((await db()('lot').count({ n: '*' }).first())!.n);
    const res = await receive(supplierId);
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('SOURCE_BLOCKED');
    expect(res.body.error.message).toMatch(/blocked/);
    expect(Number((await db()('lot').count({ n: '*' }).first())!.n)).toBe(lots);
    const ev = await db()('audit_event')
      .where({ action: 'lot.receipt-refused', entity_id: String(sourceId) })
      .first();
    expect(ev!.reason).toMatch(/blocked/);
    expect(ev!.actor_id).toBe(operator.user.id);
  });

  it('the database itself refuses a lot from a blocked source and a first delivery sampled in part', async () => {
    const { supplierId } = await supplierFor(nylon.materialId);
    const made = await receive(supplierId, 2);
    expect(made.status).toBe(201);
    const row = (await db()('lot').where({ id: made.body.id }).first())!;
    const base = { ...row, id: undefined, lot_number: `L-1999-${Date.now() % 100000}`, created_at: new Date() };
    await expect(db()('lot').insert({ ...base, source_status: 'blocked' })).rejects.toThrow(/lot_source_not_blocked/);
    await expect(
      db()('lot').insert({ ...base, source_status: 'new', first_delivery: 1, sampling_plan: 'sqrt-n-plus-1' }),
    ).rejects.toThrow(/lot_new_source_full/);
  });

  it('receives from a conditional source with the conditions QA recorded', async () => {
    const { supplierId, sourceId } = await supplierFor(nylon.materialId, { fresh: true });
    const noConditions = await setStatus(sourceId, { status: 'conditional' });
    expect(noConditions.status).toBe(422);
    const ok = await setStatus(sourceId, {
      status: 'conditional',
      conditions: 'Certificate of analysis checked against the specification for every lot until the audit closes.',
    });
    expect(ok.status).toBe(200);
    const res = await receive(supplierId);
    expect(res.status).toBe(201);
    expect(res.body.source).toMatchObject({
      statusAtReceipt: 'conditional',
      conditions: expect.stringMatching(/Certificate of analysis/),
      firstDelivery: false,
      samplingPlan: 'every-container',
      sampleCount: 4,
    });
  });

  it('receives from a new source only as a first delivery with every container sampled', async () => {
    const { supplierId } = await supplierFor(nylon.materialId, { status: 'new' });
    const res = await receive(supplierId, 20);
    expect(res.status).toBe(201);
    expect(res.body.source).toMatchObject({
      statusAtReceipt: 'new',
      firstDelivery: true,
      samplingPlan: 'every-container',
      sampleCount: 20,
    });
  });

  it('refuses a reduced plan without justification or for a source that is not qualified', async () => {
    const { sourceId } = await supplierFor(nylon.materialId, { status: 'new' });
    const forNew = await setStatus(sourceId, {
      status: 'new',
      samplingPlan: 'sqrt-n-plus-1',
      samplingJustification: 'Validated by three years of concordant identity results on every container.',
    });
    expect(forNew.status).toBe(422);
    expect(forNew.body.error.message).toMatch(/only for a qualified source/);
    const noJustification = await setStatus(sourceId, { status: 'qualified', samplingPlan: 'sqrt-n-plus-1' });
    expect(noJustification.status).toBe(422);
    expect(noJustification.body.error.message).toMatch(/justification/);
    // the database refuses it too, whatever the application does
    await expect(
      db()('source_status').insert({
        source_id: sourceId,
        status: 'new',
        sampling_plan: 'sqrt-n-plus-1',
        sampling_justification: 'x'.repeat(40),
        effective_from: today(),
        reason: 'direct',
        signature_id: 1,
        set_at: new Date(),
      }),
    ).rejects.toThrow(/source_status_plan/);
    const history = await db()('source_status').where({ source_id: sourceId });
    expect(history).toHaveLength(1);
  });

  it('samples 1 + sqrt(N) containers from a qualified source with a validated reduced plan', async () => {
    const { supplierId } = await supplierFor(nylon.materialId, {
      status: 'qualified',
      samplingPlan: 'sqrt-n-plus-1',
      samplingJustification:
        'Validated: manufacturer-sealed drums, audited 2025, 40 lots concordant on every container.',
    });
    const res = await receive(supplierId, 20);
    expect(res.status).toBe(201);
    expect(res.body.source).toMatchObject({ samplingPlan: 'sqrt-n-plus-1', sampleCount: 6, firstDelivery: false });
  });

  it('keeps the status history: no row of it can be changed or deleted, not even by the owner account', async () => {
    const owner = ownerDb();
    try {
      const row = (await db()('source_status').orderBy('id', 'desc').first())!;
      await expect(
        untyped(owner, 'source_status').where({ id: row.id }).update({ status: 'qualified' }),
      ).rejects.toThrow(/append-only/);
      await expect(db()('supplier').where({ id: 1 }).delete()).rejects.toThrow();
    } finally {
      await owner.destroy();
    }
  });
});
