/**
 * Trending (docs/trending.md): control charts of passed results, early-warning signals from the
 * run rules, QA's acknowledgement, the baseline period, the CSV export and the review by
 * exception. Real MariaDB; the history is the synthetic generator of db/seeds/trend-history.ts
 * (real sample spectrum from ../shared/reference-data, shifted and scored by the real engine).
 * Run rules: Western Electric handbook (1956) and Nelson (1984), see
 * tests/unit/trending-control-chart.test.ts for the rules themselves.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { seedTrendHistory } from '../../db/seeds/trend-history';
import { checkSignature } from '../../server/modules/integrity/service';
import { db, ownerDb, untyped } from './helpers';
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

const STEADY = 'Northmoor Polymers (invented)';
const DRIFTING = 'Calder Fibre Works (invented)';

let nylon: ApprovedMaterial;
let few: ApprovedMaterial;
let quinn: Signed;
let auditor: Signed;
let olga: Signed;
let admin: Signed;
let history: number[];

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 trend yarn', referenceFiles: [FIBRES.nylon66Reference] });
  few = await approvedMaterial({ name: 'Nylon 6,6 short-history yarn', referenceFiles: [FIBRES.nylon66Reference] });
  const inst = await instrumentWithCheck('valid');
  const operator = await account(['operator']);
  const verifier = await account(['verifier']);
  quinn = await agent(['qa_manager']);
  auditor = await agent(['auditor']);
  olga = await agent(['operator']);
  admin = await agent(['admin']);
  const common = {
    instrumentId: inst.instrumentId,
    instrumentCheckId: inst.checkId!,
    operator,
    verifier,
    sample: { data: dataFile(FIBRES.nylon66Samples[0]).buffer, name: 'nylon66-sample.csv' },
    days: 40,
  };
  history = (
    await seedTrendHistory(db(), {
      ...common,
      materialId: nylon.materialId,
      methodId: nylon.methodId,
      sources: [STEADY, DRIFTING],
      drifting: DRIFTING,
      points: 40,
      driftFrom: 24,
      driftPerPoint: 0.35,
      prefix: `TRH${Date.now() % 100000}`,
    })
  ).measurementIds;
  await seedTrendHistory(db(), {
    ...common,
    materialId: few.materialId,
    methodId: few.methodId,
    sources: ['=1+1 Formula Traders (invented)'],
    drifting: 'none',
    points: 15,
    driftFrom: 0,
    driftPerPoint: 0,
    prefix: `TRF${Date.now() % 100000}`,
  });
}, 120_000);

afterAll(retire);

const chartUrl = (m: ApprovedMaterial, q: string) => `/api/trending/chart?methodId=${m.methodId}&${q}`;

describe('the synthetic history', () => {
  it('is signed like the application signs: the integrity sweep rebuilds the signed content of its tests', async () => {
    const m = (await db()('measurement')
      .where({ id: history[5] })
      .first('test_id', 'instrument_check_id', 'created_at'))!;
    const sigs = await db()('e_signature').where({ entity_type: 'identity_test', entity_id: String(m.test_id) });
    expect(sigs.map((s) => s.meaning).sort()).toEqual(['performed', 'verified']);
    for (const s of sigs) expect(await checkSignature(db(), s, { foundIn: 'sweep' })).toBe(true);
    // every generated file is its own acquisition, fingerprinted as an upload is
    const fp = await db()('spectrum_fingerprint').where({ record_type: 'measurement', record_id: history[5] });
    expect(fp).toHaveLength(1);
    expect(m.instrument_check_id).toBeTruthy();
  });
});

describe('charts', () => {
  it('charts every passed result with limits from the first 20 points and the rules that fired', async () => {
    const res = await quinn.agent.get(chartUrl(nylon, 'metric=band-shift'));
    expect(res.status).toBe(200);
    expect(res.body.points).toHaveLength(40);
    expect(res.body.points.map((p: { measurementId: number }) => p.measurementId)).toEqual(history);
    expect(res.body.limits.points).toBe(20);
    expect(res.body.limits.basis).toMatch(/first 20 points/);
    // the individuals limits follow from MR-bar with d2 = 1.128
    expect(res.body.limits.ucl - res.body.limits.centre).toBeCloseTo((3 * res.body.limits.mrBar) / 1.128, 9);
    expect(res.body.hits.length).toBeGreaterThan(0);
    expect(res.body.caution).toMatch(/early warning, not a failure/);
  });

  it('filters by source: the drifting source has the rising band shift', async () => {
    const steady = await quinn.agent.get(
      chartUrl(nylon, `metric=band-shift&scope=source&value=${encodeURIComponent(STEADY)}`),
    );
    const drift = await quinn.agent.get(
      chartUrl(nylon, `metric=band-shift&scope=source&value=${encodeURIComponent(DRIFTING)}`),
    );
    expect(steady.body.points).toHaveLength(20);
    expect(drift.body.points).toHaveLength(20);
    const last = (r: typeof drift) => r.body.points.at(-1).value as number;
    expect(last(drift)).toBeGreaterThan(last(steady));
    expect(drift.body.scopeLabel).toBe(`Source ${DRIFTING}`);
  });

  it('gives no limits and no signal before 20 points', async () => {
    const res = await quinn.agent.get(chartUrl(few, 'metric=correlation'));
    expect(res.status).toBe(200);
    expect(res.body.points).toHaveLength(15);
    expect(res.body.limits).toBeNull();
    expect(res.body.hits).toEqual([]);
  });

  it('exports CSV with formula-safe cells', async () => {
    const res = await auditor.agent.get(`/api/trending/chart.csv?methodId=${few.methodId}&metric=correlation`);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/text\/csv/);
    expect(res.text).toContain('measurement_id,recorded_at_utc,value');
    expect(res.text).toContain("'=1+1 Formula Traders (invented)");
    expect(res.text).not.toMatch(/(^|,)=1\+1/m);
  });

  it('refuses a filter without its value, an unknown metric, and the roles that do not trend', async () => {
    const noValue = await quinn.agent.get(chartUrl(nylon, 'scope=source'));
    expect(noValue.status).toBe(400);
    expect(noValue.body.error.message).toMatch(/Name the source/);
    expect((await quinn.agent.get(chartUrl(nylon, 'metric=colour'))).status).toBe(400);
    expect((await olga.agent.get(chartUrl(nylon, 'metric=correlation'))).status).toBe(403);
    expect((await admin.agent.get(chartUrl(nylon, 'metric=correlation'))).status).toBe(403);
  });
});

describe('signals', () => {
  let signalId: number;

  it('a scan raises early-warning signals on the drifting source, audited and mailed to QA, once', async () => {
    const first = await quinn.agent.post('/api/trending/scans').send({});
    expect(first.status).toBe(200);
    expect(first.body.raised).toBeGreaterThan(0);
    const list = await quinn.agent.get(`/api/trending/signals?materialId=${nylon.materialId}`);
    const onDrift = list.body.filter(
      (s: { scopeKind: string; scopeValue: string }) => s.scopeKind === 'source' && s.scopeValue === DRIFTING,
    );
    expect(onDrift.length).toBeGreaterThan(0);
    expect(list.body.every((s: { status: string }) => s.status === 'open')).toBe(true);
    // no signal on the steady source's band shift
    expect(
      list.body.filter(
        (s: { scopeValue: string; metric: string; rule: string }) =>
          s.scopeValue === STEADY && s.metric === 'band-shift' && s.rule === 'beyond-3-sigma',
      ),
    ).toEqual([]);
    // one open signal per chart at most, and none on a filter that keeps every result (one instrument)
    const charts = list.body.map(
      (s: { methodId: number; metric: string; scopeKind: string; scopeValue: string }) =>
        `${s.methodId}|${s.metric}|${s.scopeKind}|${s.scopeValue}`,
    );
    expect(new Set(charts).size).toBe(charts.length);
    expect(list.body.filter((s: { scopeKind: string }) => s.scopeKind === 'instrument')).toEqual([]);
    // none on the short history
    expect((await quinn.agent.get(`/api/trending/signals?materialId=${few.materialId}`)).body).toEqual([]);
    signalId = onDrift[0].id;
    expect(onDrift[0].ruleSource.length).toBeGreaterThan(10);
    const audit = await db()('audit_event').where({ action: 'trend.signal-raised', entity_id: String(signalId) });
    expect(audit).toHaveLength(1);
    const mail = await db()('mail_outbox').where('subject', 'like', `Trend signal: ${nylon.name}%`);
    expect(mail.some((m) => m.to_address === `${quinn.user.username}@test.example`)).toBe(true);
    const again = await quinn.agent.post('/api/trending/scans').send({});
    expect(again.body.raised).toBe(0);
  });

  it('shows the open signal in QA’s work queue data and in the review exceptions of that source', async () => {
    const test = await db()('measurement')
      .where({ id: history.at(-1) })
      .first('test_id');
    const ex = await olga.agent.get(`/api/tests/${test!.test_id}/exceptions`);
    expect(ex.status).toBe(200);
    expect(ex.body.exceptions.some((e: { kind: string }) => e.kind === 'open-signal')).toBe(true);
    expect((await admin.agent.get(`/api/tests/${test!.test_id}/exceptions`)).status).toBe(403);
  });

  it('refuses an acknowledgement by the auditor, and one without a real comment', async () => {
    const byAuditor = await auditor.agent
      .post(`/api/trending/signals/${signalId}/acknowledge`)
      .send({ comment: 'Seen by the auditor, not for them.' });
    expect(byAuditor.status).toBe(403);
    const short = await quinn.agent.post(`/api/trending/signals/${signalId}/acknowledge`).send({ comment: 'ok' });
    expect(short.status).toBe(400);
    expect(short.body.error.message).toMatch(/at least 10 characters/);
    const s = await quinn.agent.get(`/api/trending/signals/${signalId}`);
    expect(s.body.status).toBe('open');
  });

  it('QA acknowledges once, with the comment audited; a second acknowledgement is refused', async () => {
    const comment = 'Supplier asked about a process change; next deliveries sampled with extra care.';
    const ok = await quinn.agent.post(`/api/trending/signals/${signalId}/acknowledge`).send({ comment });
    expect(ok.status).toBe(200);
    expect(ok.body).toMatchObject({ status: 'acknowledged', ackComment: comment });
    expect(ok.body.acknowledgedBy.id).toBe(quinn.user.id);
    const audit = await db()('audit_event').where({ action: 'trend.signal-acknowledged', entity_id: String(signalId) });
    expect(audit).toHaveLength(1);
    expect(audit[0].reason).toBe(comment);
    const twice = await quinn.agent.post(`/api/trending/signals/${signalId}/acknowledge`).send({ comment });
    expect(twice.status).toBe(409);
    expect((await quinn.agent.post('/api/trending/signals/999999999/acknowledge').send({ comment })).status).toBe(404);
  });

  it('the database refuses to change an acknowledged signal or to delete a signal, for the runtime and the owner account', async () => {
    for (const k of [db(), ownerDb()]) {
      await expect(k('trend_signal').where({ id: signalId }).update({ ack_comment: 'rewritten' })).rejects.toThrow(
        /set once|cannot change/,
      );
      await expect(k('trend_signal').where({ id: signalId }).update({ status: 'open' })).rejects.toThrow(
        /may not change/,
      );
      await expect(k('trend_signal').where({ id: signalId }).delete()).rejects.toThrow(
        /never deleted|DELETE command denied/,
      );
    }
  });
});

describe('baseline', () => {
  it('refuses a baseline with fewer than 20 results, a reversed period, and a non-QA role', async () => {
    const today = new Date().toISOString().slice(0, 10);
    const short = await quinn.agent
      .post('/api/trending/baselines')
      .send({ methodId: few.methodId, from: '2020-01-01', to: today, reason: 'the whole history so far' });
    expect(short.status).toBe(422);
    expect(short.body.error.code).toBe('BASELINE_TOO_SHORT');
    const reversed = await quinn.agent
      .post('/api/trending/baselines')
      .send({ methodId: nylon.methodId, from: today, to: '2020-01-01', reason: 'backwards period here' });
    expect(reversed.status).toBe(400);
    const byAuditor = await auditor.agent
      .post('/api/trending/baselines')
      .send({ methodId: nylon.methodId, from: '2020-01-01', to: today, reason: 'the whole history so far' });
    expect(byAuditor.status).toBe(403);
  });

  it('QA fixes a baseline period; the limits then come from it (audited, append-only)', async () => {
    const today = new Date().toISOString().slice(0, 10);
    const res = await quinn.agent.post('/api/trending/baselines').send({
      methodId: nylon.methodId,
      from: '2020-01-01',
      to: today,
      reason: 'All deliveries so far, both sources.',
    });
    expect(res.status).toBe(201);
    const chart = await quinn.agent.get(chartUrl(nylon, 'metric=correlation'));
    expect(chart.body.limits.points).toBe(40);
    expect(chart.body.limits.basis).toMatch(/Baseline fixed by/);
    expect(
      await db()('audit_event').where({ action: 'trend.baseline-fixed', entity_id: String(res.body.id) }),
    ).toHaveLength(1);
    await expect(untyped(db(), 'trend_baseline').where({ id: res.body.id }).update({ reason: 'x' })).rejects.toThrow(
      /UPDATE command denied/,
    );
    await expect(
      untyped(ownerDb(), 'trend_baseline').where({ id: res.body.id }).update({ reason: 'x' }),
    ).rejects.toThrow(/append-only/);
  });
});

describe('QA overview', () => {
  const day = (offset: number) => new Date(Date.now() + offset * 86_400_000).toISOString().slice(0, 10);

  it('gives first-pass rates per source and invalid rates per instrument for the period, from the records', async () => {
    const res = await auditor.agent.get(`/api/qa-overview?from=${day(-60)}&to=${day(0)}`);
    expect(res.status).toBe(200);
    const bySource = new Map(res.body.firstPassBySource.map((r: { key: string }) => [r.key, r]));
    // every synthetic lot passed at its first attempt without an investigation
    expect(bySource.get(STEADY)).toMatchObject({ count: 20, total: 20, rate: 1 });
    expect(bySource.get(DRIFTING)).toMatchObject({ count: 20, total: 20, rate: 1 });
    const first = (await db()('measurement').where({ id: history[0] }).first('instrument_id'))!;
    const inst = res.body.invalidByInstrument.find((r: { key: string }) => r.key === String(first.instrument_id));
    // both histories (40 + 15 results) were measured on the one instrument
    expect(inst).toMatchObject({ count: 0, total: 55, rate: 0 });
    expect(res.body.notes.length).toBeGreaterThan(0);
    // a period before the history holds none of it
    const before = await auditor.agent.get('/api/qa-overview?from=2001-01-01&to=2001-12-31');
    expect(before.body.firstPassBySource).toEqual([]);
  });

  it('refuses a reversed period and the roles that do not report', async () => {
    expect((await quinn.agent.get(`/api/qa-overview?from=${day(0)}&to=${day(-5)}`)).status).toBe(400);
    expect((await olga.agent.get(`/api/qa-overview?from=${day(-5)}&to=${day(0)}`)).status).toBe(403);
    expect((await admin.agent.get(`/api/qa-overview?from=${day(-5)}&to=${day(0)}`)).status).toBe(403);
  });
});
