/**
 * Investigations opened from a trend signal (docs/trending.md, "Investigating a signal"): QA opens
 * one with an e-signature; it names the signal and the measurements of its pattern; the signal
 * links to it; QA records the phase I check and closes it with a signed conclusion. A trend
 * investigation never invalidates a result or rejects a lot. Every refusal is tried here. Real
 * MariaDB; the history is the synthetic generator of db/seeds/trend-history.ts (real sample
 * spectrum from ../shared/reference-data, shifted and scored by the real engine). Run rules:
 * tests/unit/trending-control-chart.test.ts.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedTrendHistory } from '../../db/seeds/trend-history';
import { checkSignature } from '../../server/modules/integrity/service';
import type { MeasurementRow } from '../../server/lib/db-tables';
import { db, ownerDb, sig } from './helpers';
import {
  account,
  agent,
  approvedMaterial,
  dataFile,
  FIBRES,
  instrumentWithCheck,
  retire,
  type ApprovedMaterial,
} from './fixtures-testing';

type Signed = Awaited<ReturnType<typeof agent>>;
interface Signal {
  id: number;
  status: string;
  scopeKind: string;
  scopeValue: string;
  measurementId: number;
  pointIds: number[];
  investigationId: number | null;
}

const DRIFTING = 'Harrowgate Yarns (invented)';

let nylon: ApprovedMaterial;
let quinn: Signed;
let quinn2: Signed;
let dual: Signed;
let auditor: Signed;
let olga: Signed;
let signals: Signal[];
let history: number[];

const phase1 = (u: Signed['user']) => ({
  instrument: { ok: true, note: 'Instrument checks of the period valid.' },
  sampleHandling: { ok: true, note: 'Sampling records complete.' },
  method: { ok: true, note: 'Same method version throughout.' },
  data: { ok: true, note: 'Files match their containers.' },
  summary: 'No laboratory cause for the drift; it follows the source.',
  signature: sig(u),
});

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 drift-probe yarn', referenceFiles: [FIBRES.nylon66Reference] });
  const inst = await instrumentWithCheck('valid');
  // the operator of the history also holds the QA role: such a person may not decide its investigation
  dual = await agent(['operator', 'qa_manager']);
  const verifier = await account(['verifier']);
  quinn = await agent(['qa_manager']);
  quinn2 = await agent(['qa_manager']);
  auditor = await agent(['auditor']);
  olga = await agent(['operator']);
  history = (
    await seedTrendHistory(db(), {
      instrumentId: inst.instrumentId,
      instrumentCheckId: inst.checkId!,
      operator: dual.user,
      verifier,
      sample: { data: dataFile(FIBRES.nylon66Samples[0]).buffer, name: 'nylon66-sample.csv' },
      days: 40,
      materialId: nylon.materialId,
      methodId: nylon.methodId,
      sources: ['Ashby Filaments (invented)', DRIFTING],
      drifting: DRIFTING,
      points: 40,
      driftFrom: 24,
      driftPerPoint: 0.35,
      prefix: `TIV${Date.now() % 100000}`,
    })
  ).measurementIds;
  expect((await quinn.agent.post('/api/trending/scans').send({})).status).toBe(200);
  signals = (await quinn.agent.get(`/api/trending/signals?materialId=${nylon.materialId}`)).body;
  expect(signals.filter((s) => s.scopeValue === DRIFTING).length).toBeGreaterThanOrEqual(2);
}, 180_000);

afterAll(retire);

const open = (who: Signed, signalId: number, over: Record<string, unknown> = {}) =>
  who.agent
    .post(`/api/trending/signals/${signalId}/investigation`)
    .send({ reason: 'The band shift of this source keeps rising: find out why.', signature: sig(who.user), ...over });

const investigationsOf = (signalId: number) => db()('investigation').where({ trend_signal_id: signalId });

/** The review exceptions of a verified test of the drifting source, as a verifier reads them. */
async function driftExceptions(): Promise<string[]> {
  const m = await db()('measurement as me')
    .join('identity_test as t', 't.id', 'me.test_id')
    .join('lot as l', 'l.id', 't.lot_id')
    .whereIn('me.id', history)
    .where('l.supplier', DRIFTING)
    .orderBy('me.id', 'desc')
    .first<Pick<MeasurementRow, 'test_id'> | undefined>('me.test_id');
  const res = await olga.agent.get(`/api/tests/${m!.test_id}/exceptions`);
  expect(res.status).toBe(200);
  return res.body.exceptions
    .filter((e: { kind: string }) => e.kind === 'open-signal')
    .map((e: { text: string }) => e.text);
}

describe('opening an investigation from a trend signal', () => {
  let target: Signal;
  let invId: number;

  it('refuses the auditor, an operator, a short reason, a wrong password and an unknown signal; nothing is stored', async () => {
    target = signals.find((s) => s.scopeValue === DRIFTING)!;
    expect((await open(auditor, target.id)).status).toBe(403);
    expect((await open(olga, target.id)).status).toBe(403);
    const short = await open(quinn, target.id, { reason: 'drift' });
    expect(short.status).toBe(400);
    expect(short.body.error.message).toMatch(/at least 10 characters/);
    const wrong = await open(quinn, target.id, { signature: { username: quinn.user.username, password: 'not-it-1' } });
    expect(wrong.status).toBe(401);
    expect((await open(quinn, 999_999_999)).status).toBe(404);
    expect(await investigationsOf(target.id)).toEqual([]);
    const s = await quinn.agent.get(`/api/trending/signals/${target.id}`);
    expect(s.body).toMatchObject({ status: 'open', investigationId: null });
  });

  it('QA opens it, signed over the signal and its measurements; the signal links to it; audited and mailed', async () => {
    const res = await open(quinn, target.id);
    expect(res.status).toBe(201);
    invId = res.body.id;
    expect(res.body).toMatchObject({ kind: 'trend', status: 'open', lotId: null, testId: null, failing: [] });
    expect(res.body.number).toMatch(/^INV-\d{4}-\d{4}$/);
    expect(res.body.materialName).toBe(nylon.name);
    // the investigation names the signal and every measurement of its pattern
    expect(res.body.trend.signal).toMatchObject({
      id: target.id,
      rule: expect.any(String),
      scopeLabel: expect.any(String),
    });
    const named = res.body.trend.measurements.map((m: { measurementId: number }) => m.measurementId).sort();
    expect(named).toEqual([...new Set([...target.pointIds, target.measurementId])].sort());
    expect(named.every((id: number) => history.includes(id))).toBe(true);
    expect(res.body.trend.measurements[0]).toMatchObject({
      lotNumber: expect.any(String),
      container: expect.any(String),
    });
    // signed, and the signature rebuilds from the stored record
    const opened = res.body.signatures.find((x: { meaning: string }) => x.meaning === 'investigation-opened');
    expect(opened).toBeTruthy();
    const row = (await db()('e_signature').where({ id: opened.id }).first())!;
    expect(await checkSignature(db(), row, { foundIn: 'sweep' })).toBe(true);
    expect((await db()('investigation').where({ id: invId }).first())!.opening_signature_id).toBe(opened.id);
    // the signal links to it and leaves the open list
    const s = await quinn.agent.get(`/api/trending/signals/${target.id}`);
    expect(s.body).toMatchObject({
      status: 'investigated',
      investigationId: invId,
      investigationNumber: res.body.number,
    });
    const openList = (await quinn.agent.get(`/api/trending/signals?materialId=${nylon.materialId}`)).body;
    expect(openList.map((x: Signal) => x.id)).not.toContain(target.id);
    // audited on both records, with the reason
    const a1 = await db()('audit_event').where({ action: 'investigation.opened', entity_id: String(invId) });
    expect(a1).toHaveLength(1);
    expect(a1[0].reason).toMatch(/keeps rising/);
    const a2 = await db()('audit_event').where({ action: 'trend.signal-investigated', entity_id: String(target.id) });
    expect(a2).toHaveLength(1);
    // the other QA managers are told
    const mail = await db()('mail_outbox').where('subject', 'like', `Investigation ${res.body.number} opened%`);
    expect(mail.map((m) => m.to_address)).toContain(`${quinn2.user.username}@test.example`);
    // listed with the open investigations and in the work queue data
    const list = await olga.agent.get('/api/investigations');
    expect(list.body.map((i: { id: number }) => i.id)).toContain(invId);
    // the verifier's review still leads with the signal while its investigation is open
    const ex = await driftExceptions();
    expect(
      ex.some((t) => t.includes(`Trend signal ${target.id} `) && t.includes(`under investigation ${res.body.number}`)),
    ).toBe(true);
  });

  it('refuses a second investigation of the same signal, and an acknowledgement of an investigated signal', async () => {
    const again = await open(quinn2, target.id);
    expect(again.status).toBe(409);
    expect(again.body.error.message).toMatch(/already has its investigation/);
    expect(await investigationsOf(target.id)).toHaveLength(1);
    const ack = await quinn.agent
      .post(`/api/trending/signals/${target.id}/acknowledge`)
      .send({ comment: 'Seen; the investigation follows it up.' });
    expect(ack.status).toBe(409);
  });

  it('refuses an investigation of an acknowledged signal', async () => {
    const other = signals.find((s) => s.id !== target.id)!;
    const ack = await quinn.agent
      .post(`/api/trending/signals/${other.id}/acknowledge`)
      .send({ comment: 'Within what this source always showed; no action.' });
    expect(ack.status).toBe(200);
    const res = await open(quinn, other.id);
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/already acknowledged/);
    expect(await investigationsOf(other.id)).toEqual([]);
  });

  it('never invalidates a result or rejects a lot; the conclusion needs the phase I check first', async () => {
    const early = await quinn.agent
      .post(`/api/investigations/${invId}/conclude`)
      .send({ conclusion: 'Nothing found in the laboratory; supplier informed.', signature: sig(quinn.user) });
    expect(early.status).toBe(409);
    expect(early.body.error.message).toMatch(/phase I/);
    expect((await quinn.agent.post(`/api/investigations/${invId}/phase1`).send(phase1(quinn.user))).status).toBe(200);
    const inv = await quinn.agent.post(`/api/investigations/${invId}/invalidate`).send({
      cause: 'instrument',
      justification: 'An attempt to invalidate results through a trend investigation.',
      retestContainerIds: [1],
      signature: sig(quinn.user),
    });
    expect(inv.status).toBe(409);
    expect(inv.body.error.message).toMatch(/never invalidates a result or rejects a lot/);
    const confirm = await quinn.agent.post(`/api/investigations/${invId}/confirm`).send({
      justification: 'An attempt to reject a lot through a trend investigation.',
      signature: sig(quinn.user),
    });
    expect(confirm.status).toBe(409);
  });

  it('refuses the conclusion by someone who measured its points, a short one and a non-QA role', async () => {
    const body = { conclusion: 'Supplier confirmed a process change; deliveries tested as usual.' };
    const byAnalyst = await dual.agent
      .post(`/api/investigations/${invId}/conclude`)
      .send({ ...body, signature: sig(dual.user) });
    expect(byAnalyst.status).toBe(403);
    expect(byAnalyst.body.error.message).toMatch(/recorded measurements of this trend signal/);
    const short = await quinn.agent
      .post(`/api/investigations/${invId}/conclude`)
      .send({ conclusion: 'fine', signature: sig(quinn.user) });
    expect(short.status).toBe(400);
    expect((await auditor.agent.post(`/api/investigations/${invId}/conclude`).send(body)).status).toBe(403);
    expect((await db()('investigation').where({ id: invId }).first())!.status).toBe('phase1-recorded');
  });

  it('QA concludes it with a signature; closed once; audited', async () => {
    const conclusion = 'Supplier confirmed a process change of the spinning finish; deliveries tested as usual.';
    const res = await quinn.agent
      .post(`/api/investigations/${invId}/conclude`)
      .send({ conclusion, signature: sig(quinn.user) });
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({ status: 'closed', decision: 'concluded', justification: conclusion });
    const s = res.body.signatures.find((x: { meaning: string }) => x.meaning === 'trend-concluded');
    const row = (await db()('e_signature').where({ id: s.id }).first())!;
    expect(await checkSignature(db(), row, { foundIn: 'sweep' })).toBe(true);
    expect(
      await db()('audit_event').where({ action: 'investigation.trend-concluded', entity_id: String(invId) }),
    ).toHaveLength(1);
    const twice = await quinn.agent
      .post(`/api/investigations/${invId}/conclude`)
      .send({ conclusion, signature: sig(quinn.user) });
    expect(twice.status).toBe(409); // concluded: no longer an exception of the verifier's review
    expect((await driftExceptions()).some((t) => t.includes(`signal ${target.id} `))).toBe(false);
  });

  it('refuses a conclusion on an investigation of a failing result', async () => {
    const m = (await db()('measurement').where({ id: history[0] }).first('test_id'))!;
    const t = (await db()('identity_test').where({ id: m.test_id }).first('lot_id'))!;
    const [failId] = await db()('investigation').insert({
      number: `INV-PROBE-${Date.now() % 1e8}`,
      kind: 'failure',
      lot_id: t.lot_id,
      test_id: m.test_id,
      status: 'phase1-recorded',
      failing: '[]',
      phase1: '{}',
      opened_at: new Date(),
      updated_at: new Date(),
    });
    const res = await quinn.agent.post(`/api/investigations/${failId}/conclude`).send({
      conclusion: 'An attempt to close a failure investigation without a decision.',
      signature: sig(quinn.user),
    });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/failing result/);
  });

  it('the database refuses to rewrite what the investigation names, a retest through it, or the signal’s link', async () => {
    for (const k of [db(), ownerDb()]) {
      await expect(k('investigation').where({ id: invId }).update({ subject: '{}' })).rejects.toThrow(/never changes/);
      await expect(k('investigation').where({ id: invId }).update({ kind: 'failure' })).rejects.toThrow(
        /never changes/,
      );
      await expect(k('trend_signal').where({ id: target.id }).update({ investigation_id: null })).rejects.toThrow(
        /set once|cannot change/,
      );
      await expect(k('trend_signal').where({ id: target.id }).update({ status: 'open' })).rejects.toThrow(
        /may not change/,
      );
    }
    // a second trend investigation, phase I recorded: no retest can be authorised through it
    const still = (await quinn.agent.get(`/api/trending/signals?materialId=${nylon.materialId}`)).body as Signal[];
    expect(still.length).toBeGreaterThan(0);
    const second = await open(quinn2, still[0].id);
    expect(second.status).toBe(201);
    expect(
      (await quinn.agent.post(`/api/investigations/${second.body.id}/phase1`).send(phase1(quinn.user))).status,
    ).toBe(200);
    for (const k of [db(), ownerDb()])
      await expect(
        k('investigation')
          .where({ id: second.body.id })
          .update({ status: 'retest-authorised', decision: 'invalidated', retest_containers: '[]' }),
      ).rejects.toThrow(/never authorises a retest|needs|must name/);
  });
});
