/**
 * Instruments kept fit (issue 15, items 4 and 5): out of service and back, qualification and
 * maintenance records, the ATR blank check (carry-over), the required checks before a test, and
 * the failed-check look-back with its QA impact assessment.
 *
 * Sources:
 * - Carry-over: 1 % of the real toluene spectrum ../shared/reference-data/atr-ftir/toluene.csv
 *   (NRCan/PlotFTIR, 5-bounce ZnSe ATR, GPL-3+) added to a flat blank; toluene's strongest band
 *   lies near 694 cm-1 (aromatic C-H out-of-plane bending; from memory).
 * - The polystyrene film ../shared/reference-data/atr-ftir/polystyrene_film.csv, shifted by 6 cm-1
 *   so that it fails the fixture's site specification (+-4 cm-1).
 * - Blank limits (0.005 absorbance, CO2 region 2280-2400 cm-1 excluded) are this test's own
 *   choice (common practice for a clean diamond ATR is well below 0.01 absorbance; from memory).
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { issueCertificate } from '../../server/modules/certificates';
import { createPassedLot } from './fixtures-certificates';
import { refData, shiftedCsv, sigOf } from './fixtures-library';
import {
  approvedMaterial,
  FIBRES,
  instrumentWithCheck,
  receiveLot,
  startTest,
  upload,
  uploadRequest,
  writeCounts,
  type ApprovedMaterial,
} from './fixtures-testing';
import { agentFor, db, ownerDb, untyped } from './helpers';

type Ctx = Awaited<ReturnType<typeof agentFor>>;
let qa: Ctx;
let op: Ctx;
let ver: Ctx;
let nylon: ApprovedMaterial;

const REFUSED = { errno: 1644 };
const BLANK_LIMITS = { maxAbsorbance: 0.005, range: { from: 650, to: 4000 }, excluded: [{ from: 2280, to: 2400 }] };

/** A flat blank on the toluene file's own grid: seeded noise of 0.0005 absorbance, plus `carry` x toluene. */
function blankCsv(seed: number, carry = 0): Buffer {
  const rows = refData('atr-ftir/toluene.csv').toString('utf8').trim().split(/\r?\n/);
  let s = seed >>> 0;
  const rand = () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
  const out = [rows[0]];
  for (const line of rows.slice(1)) {
    const [x, y] = line.split(',');
    const noise = 0.0005 * (rand() + rand() + rand() - 1.5) * 2;
    out.push(`${x},${(noise + carry * Number(y)).toFixed(7)}`);
  }
  return Buffer.from(out.join('\n') + '\n');
}

function check(agent: Ctx, instrumentId: number, checkType: string, name: string, data: Buffer) {
  return agent.agent
    .post(`/api/instruments/${instrumentId}/checks`)
    .attach('file', data, name)
    .field('checkType', checkType)
    .field('username', agent.user.username)
    .field('password', agent.user.password);
}

async function approveBlank(instrumentId: number) {
  const res = await qa.agent.post(`/api/instruments/${instrumentId}/specs`).send({
    spec: {
      checkType: 'atr-blank',
      kind: 'site',
      limits: BLANK_LIMITS,
      justification: 'Clean diamond crystal: no band beyond 0.005 absorbance (site qualification).',
    },
    signature: sigOf(qa.user),
  });
  expect(res.status, JSON.stringify(res.body)).toBe(201);
  return res.body;
}

beforeAll(async () => {
  [qa, op, ver] = await Promise.all([agentFor(['qa_manager']), agentFor(['operator']), agentFor(['verifier'])]);
  nylon = await approvedMaterial({ name: 'Nylon 6,6 (lifecycle test)', referenceFiles: [FIBRES.nylon66Reference] });
});

describe('out of service and back', () => {
  it('an instrument out of service refuses a new test and uploads to a running one; QA alone puts it back, signed; old checks no longer count', async () => {
    const inst = await instrumentWithCheck('valid');
    const lotA = await receiveLot(op.agent, nylon.materialId, 1);
    const testId = await startTest(op.agent, lotA.id, inst.instrumentId);

    const noReason = await op.agent.post(`/api/instruments/${inst.instrumentId}/out-of-service`).send({ reason: '' });
    expect(noReason.status).toBe(400);
    const out = await op.agent
      .post(`/api/instruments/${inst.instrumentId}/out-of-service`)
      .send({ reason: 'Interferometer error on start-up; service engineer called.' });
    expect(out.status, JSON.stringify(out.body)).toBe(200);
    expect(out.body.serviceState).toBe('out-of-service');
    expect(out.body.checkDue).toBe(true);
    expect(out.body.serviceEvents[0]).toMatchObject({ state: 'out-of-service', recordedBy: op.user.id });

    // no new test
    const lotB = await receiveLot(op.agent, nylon.materialId, 1);
    const start = await op.agent.post(`/api/lots/${lotB.id}/tests`).send({ instrumentId: inst.instrumentId });
    expect(start.status).toBe(409);
    expect(start.body.error.code).toBe('INSTRUMENT_CHECK_DUE');
    expect(start.body.error.message).toMatch(/out of service/);
    expect(await db()('identity_test').where({ lot_id: lotB.id })).toHaveLength(0);
    // no measurement on the running test
    const before = await writeCounts();
    const up = await uploadRequest(op.agent, testId, { label: lotA.containers[0].label }, FIBRES.nylon66Samples[0]);
    expect(up.status).toBe(409);
    expect(up.body.error.message).toMatch(/out of service/);
    expect(await writeCounts()).toEqual(before);

    // back in service: not the operator; not QA without the password
    const byOp = await op.agent
      .post(`/api/instruments/${inst.instrumentId}/back-in-service`)
      .send({ reason: 'Repaired and checked by the engineer.', signature: sigOf(op.user) });
    expect(byOp.status).toBe(403);
    const wrong = await qa.agent
      .post(`/api/instruments/${inst.instrumentId}/back-in-service`)
      .send({ reason: 'Repaired and checked by the engineer.', signature: { ...sigOf(qa.user), password: 'nope' } });
    expect(wrong.status).toBe(401);
    expect((await db()('instrument').where({ id: inst.instrumentId }).first())!.service_state).toBe('out-of-service');
    const back = await qa.agent
      .post(`/api/instruments/${inst.instrumentId}/back-in-service`)
      .send({ reason: 'Laser replaced (service report SR-118); released by QA.', signature: sigOf(qa.user) });
    expect(back.status, JSON.stringify(back.body)).toBe(200);
    expect(back.body.serviceState).toBe('in-service');
    expect(back.body.serviceEvents[0].signature).toMatchObject({ meaning: 'back-in-service' });
    // the check made before the return does not count: still check due
    expect(back.body.checkDue).toBe(true);
    const again = await op.agent.post(`/api/lots/${lotB.id}/tests`).send({ instrumentId: inst.instrumentId });
    expect(again.status).toBe(409);
    expect(again.body.error.message).toMatch(/came back into service/);

    // the event rows are append-only, for the owner account too
    await expect(
      untyped(ownerDb(), 'instrument_service_event')
        .where({ instrument_id: inst.instrumentId })
        .update({ reason: 'x' }),
    ).rejects.toMatchObject(REFUSED);
  });
});

describe('qualification and maintenance records', () => {
  it('QA records a qualification signed with the password (not the operator; a wrong password stores nothing); a failed or overdue one stops use; the bench logs maintenance', async () => {
    const inst = await instrumentWithCheck('valid');
    const body = {
      stage: 'oq',
      documentRef: 'OQ-FTIR-2026-014 rev. 1',
      executedFrom: '2026-03-02',
      executedTo: '2026-03-03',
      status: 'passed',
      nextDue: '2027-03-01',
      summary: 'All OQ tests met their acceptance criteria; no deviations.',
    };
    const byOp = await op.agent
      .post(`/api/instruments/${inst.instrumentId}/qualifications`)
      .send({ ...body, signature: sigOf(op.user) });
    expect(byOp.status).toBe(403);
    const wrong = await qa.agent
      .post(`/api/instruments/${inst.instrumentId}/qualifications`)
      .send({ ...body, signature: { ...sigOf(qa.user), password: 'wrong' } });
    expect(wrong.status).toBe(401);
    const backwards = await qa.agent
      .post(`/api/instruments/${inst.instrumentId}/qualifications`)
      .send({ ...body, executedTo: '2026-03-01', signature: sigOf(qa.user) });
    expect(backwards.status).toBe(400);
    expect(await db()('instrument_qualification').where({ instrument_id: inst.instrumentId })).toHaveLength(0);
    const ok = await qa.agent
      .post(`/api/instruments/${inst.instrumentId}/qualifications`)
      .send({ ...body, signature: sigOf(qa.user) });
    expect(ok.status, JSON.stringify(ok.body)).toBe(201);
    expect(ok.body.qualifications[0]).toMatchObject({
      stage: 'oq',
      documentRef: body.documentRef,
      executedFrom: '2026-03-02',
      nextDue: '2027-03-01',
      status: 'passed',
    });
    expect(ok.body.qualifications[0].signature).toMatchObject({ meaning: 'qualification-approved' });

    // a failed qualification stops use until a passing one is recorded; so does a next due date passed
    const lot = await receiveLot(op.agent, nylon.materialId, 1);
    const failedPq = await qa.agent.post(`/api/instruments/${inst.instrumentId}/qualifications`).send({
      ...body,
      stage: 'pq',
      documentRef: 'PQ-FTIR-2026-015',
      status: 'failed',
      summary: 'Wavenumber repeatability outside the PQ limit.',
      signature: sigOf(qa.user),
    });
    expect(failedPq.status).toBe(201);
    expect(failedPq.body.checkDue).toBe(true);
    const refused = await op.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId: inst.instrumentId });
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toMatch(/qualification record .* failed/);
    const overdue = await qa.agent.post(`/api/instruments/${inst.instrumentId}/qualifications`).send({
      ...body,
      stage: 'requalification',
      documentRef: 'RQ-FTIR-2026-016',
      executedFrom: '2025-01-10',
      executedTo: '2025-01-11',
      nextDue: '2026-01-10',
      signature: sigOf(qa.user),
    });
    expect(overdue.status).toBe(201);
    const late = await op.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId: inst.instrumentId });
    expect(late.status).toBe(409);
    expect(late.body.error.message).toMatch(/requalification .* was due on 2026-01-10/);
    const renewed = await qa.agent.post(`/api/instruments/${inst.instrumentId}/qualifications`).send({
      ...body,
      stage: 'requalification',
      documentRef: 'RQ-FTIR-2026-017',
      signature: sigOf(qa.user),
    });
    expect(renewed.status).toBe(201);
    expect(renewed.body.checkDue).toBe(false);
    await startTest(op.agent, lot.id, inst.instrumentId);

    const m = await op.agent.post(`/api/instruments/${inst.instrumentId}/maintenance`).send({
      kind: 'preventive',
      performedOn: '2026-04-10',
      performedBy: 'In-house engineer (invented)',
      description: 'Desiccant replaced, window inspected and cleaned.',
    });
    expect(m.status, JSON.stringify(m.body)).toBe(201);
    expect(m.body.maintenance[0]).toMatchObject({ kind: 'preventive', performedOn: '2026-04-10' });
    const ev = await db()('audit_event')
      .where({ action: 'instrument.maintenance-recorded', entity_id: String(m.body.maintenance[0].id) })
      .first();
    expect(ev).toBeDefined();
  });
});

describe('ATR blank and the required checks', () => {
  it('limits fit the instrument: an ATR blank for an NIR instrument is refused; limits of the wrong shape are refused', async () => {
    const nir = await instrumentWithCheck('valid', { technique: 'nir', sampling: 'diffuse-reflectance' });
    const res = await qa.agent.post(`/api/instruments/${nir.instrumentId}/specs`).send({
      spec: { checkType: 'atr-blank', kind: 'site', limits: BLANK_LIMITS, justification: 'x'.repeat(25) },
      signature: sigOf(qa.user),
    });
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('CHECK_TYPE_UNFIT');
    const inst = await instrumentWithCheck('valid');
    const bad = await qa.agent.post(`/api/instruments/${inst.instrumentId}/specs`).send({
      spec: { checkType: 'atr-blank', kind: 'site', limits: { maxAbsorbance: -1 }, justification: 'x'.repeat(25) },
      signature: sigOf(qa.user),
    });
    expect(bad.status).toBe(400);
    expect(
      await db()('instrument_check_spec').where({ instrument_id: inst.instrumentId, check_type: 'atr-blank' }),
    ).toHaveLength(0);
  });

  it('once QA approves blank limits the blank is required; a clean blank passes; a carry-over blank FAILS and the test is refused again', async () => {
    const inst = await instrumentWithCheck('valid');
    const spec = await approveBlank(inst.instrumentId);
    expect(spec.required.map((r: { checkType: string }) => r.checkType)).toEqual(['polystyrene', 'atr-blank']);
    expect(spec.checkDue).toBe(true);
    const lot = await receiveLot(op.agent, nylon.materialId, 1);
    const refused = await op.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId: inst.instrumentId });
    expect(refused.status).toBe(409);
    expect(refused.body.error.message).toMatch(/no ATR blank .*check on record/);

    const clean = await check(op, inst.instrumentId, 'atr-blank', 'blank-clean.csv', blankCsv(11));
    expect(clean.status, JSON.stringify(clean.body)).toBe(201);
    expect(clean.body).toMatchObject({ checkType: 'atr-blank', verdict: 'pass' });
    await startTest(op.agent, lot.id, inst.instrumentId);

    const dirty = await check(op, inst.instrumentId, 'atr-blank', 'blank-dirty.csv', blankCsv(12, 0.01));
    expect(dirty.status).toBe(201);
    expect(dirty.body.verdict).toBe('fail');
    expect(dirty.body.result.bandsAboveLimit.length).toBeGreaterThan(0);
    expect(Math.abs(dirty.body.result.bandsAboveLimit[0].position - 693.3)).toBeLessThan(3);
    const lot2 = await receiveLot(op.agent, nylon.materialId, 1);
    const after = await op.agent.post(`/api/lots/${lot2.id}/tests`).send({ instrumentId: inst.instrumentId });
    expect(after.status).toBe(409);
    expect(after.body.error.message).toMatch(/last ATR blank .*check .* failed/);
  });
});

describe('noise figure and NIR wavelength accuracy through the API', () => {
  it('a noise check with QA limits passes a quiet spectrum; NIR wavelength accuracy passes the real HDPE spectrum and FAILS a shifted copy', async () => {
    const atr = await instrumentWithCheck('valid');
    const noiseSpec = await qa.agent.post(`/api/instruments/${atr.instrumentId}/specs`).send({
      spec: {
        checkType: 'noise',
        kind: 'site',
        limits: { region: { from: 2000, to: 2200 }, maxRms: 0.002 },
        justification: 'Noise figure limit from the OQ report of this instrument (test).',
      },
      signature: sigOf(qa.user),
    });
    expect(noiseSpec.status, JSON.stringify(noiseSpec.body)).toBe(201);
    const quiet = await check(op, atr.instrumentId, 'noise', 'noise.csv', blankCsv(31));
    expect(quiet.status, JSON.stringify(quiet.body)).toBe(201);
    expect(quiet.body).toMatchObject({ checkType: 'noise', verdict: 'pass' });
    expect(quiet.body.result.rms).toBeGreaterThan(0.0003);
    expect(quiet.body.result.rms).toBeLessThan(0.0008);

    // Real NIR diffuse reflectance: ../shared/reference-data/nir-polyolefins/HDPE_NIST-SRM1474_N1474PE_r1.csv
    // (NIST ECAPS, public domain). The "certified" positions are this spectrum's own band maxima
    // (polyethylene CH2 overtone and combination bands; the engine unit test places them within
    // 5 nm of the tabulated 1728, 1765, 2310 and 2350 nm), so it must pass and a copy shifted
    // by 10 cm-1 (about 3 nm at 1730 nm, 5 nm at 2310 nm) must fail a 1 nm tolerance.
    const nir = await instrumentWithCheck('valid', { technique: 'nir', sampling: 'diffuse-reflectance' });
    const unfit = await check(op, nir.instrumentId, 'atr-blank', 'blank.csv', blankCsv(32));
    expect(unfit.status).toBe(422);
    const positions = [1731.84, 1765.75, 2313.05, 2351.47];
    const wl = await qa.agent.post(`/api/instruments/${nir.instrumentId}/specs`).send({
      spec: {
        checkType: 'nir-wavelength',
        kind: 'site',
        limits: {
          standard: 'Site polyethylene wavelength standard, certificate WS-TEST-1 (test)',
          bands: positions.map((nominal) => ({ nominal, tolerance: 1 })),
        },
        justification: 'Positions and tolerances from the standard certificate (test).',
      },
      signature: sigOf(qa.user),
    });
    expect(wl.status, JSON.stringify(wl.body)).toBe(201);
    const hdpe = refData('nir-polyolefins/HDPE_NIST-SRM1474_N1474PE_r1.csv');
    const good = await check(op, nir.instrumentId, 'nir-wavelength', 'hdpe.csv', hdpe);
    expect(good.status, JSON.stringify(good.body)).toBe(201);
    expect(good.body.verdict).toBe('pass');
    for (const b of good.body.result.bands) expect(Math.abs(b.deviation)).toBeLessThan(0.05);
    const bad = await check(op, nir.instrumentId, 'nir-wavelength', 'hdpe-shifted.csv', shiftedCsv(hdpe, -10));
    expect(bad.body.verdict).toBe('fail');
    expect(bad.body.result.bands.every((b: { ok: boolean }) => !b.ok)).toBe(true);
    expect(await db()('check_impact_assessment').where({ instrument_check_id: bad.body.id })).toHaveLength(1);
  });
});

describe('failed-check look-back', () => {
  it('lists exactly the measurements since the last passing check of that type, with notices; QA closes it signed', async () => {
    const inst = await instrumentWithCheck('valid');
    await approveBlank(inst.instrumentId);
    expect((await check(op, inst.instrumentId, 'atr-blank', 'b1.csv', blankCsv(21))).body.verdict).toBe('pass');
    const lotA = await receiveLot(op.agent, nylon.materialId, 1);
    const tA = await startTest(op.agent, lotA.id, inst.instrumentId);
    const m1 = await upload(op.agent, tA, { label: lotA.containers[0].label }, FIBRES.nylon66Samples[0]);
    // a second passing blank: m1 lies before it and is not in doubt
    expect((await check(op, inst.instrumentId, 'atr-blank', 'b2.csv', blankCsv(22))).body.verdict).toBe('pass');
    const lotB = await receiveLot(op.agent, nylon.materialId, 2);
    const tB = await startTest(op.agent, lotB.id, inst.instrumentId);
    const m2 = await upload(op.agent, tB, { label: lotB.containers[0].label }, FIBRES.nylon66Samples[1]);
    const m3 = await upload(op.agent, tB, { label: lotB.containers[1].label }, FIBRES.nylon66Samples[2]);

    const fail = await check(op, inst.instrumentId, 'atr-blank', 'b3.csv', blankCsv(23, 0.01));
    expect(fail.body.verdict).toBe('fail');
    const a = await db()('check_impact_assessment').where({ instrument_check_id: fail.body.id }).first();
    expect(a).toBeDefined();
    const view = await ver.agent.get(`/api/impact-assessments/${a!.id}`);
    expect(view.status).toBe(200);
    expect(view.body).toMatchObject({ status: 'open', checkType: 'atr-blank', basis: 'acquisition-or-upload' });
    expect(view.body.measurements.map((m: { measurementId: number }) => m.measurementId)).toEqual([m2.id, m3.id]);
    expect(view.body.measurements.map((m: { measurementId: number }) => m.measurementId)).not.toContain(m1.id);
    expect(view.body.notices).toHaveLength(1);
    expect(view.body.notices[0]).toMatchObject({ lotId: lotB.id, certificateId: null });
    expect((await op.agent.get(`/api/lots/${lotA.id}/impact-notices`)).body).toHaveLength(0);
    expect((await op.agent.get(`/api/lots/${lotB.id}/impact-notices`)).body).toHaveLength(1);

    // QA only, signed; only listed containers; a retest names containers
    const dec = (agent: Ctx, body: Record<string, unknown>) =>
      agent.agent.post(`/api/impact-assessments/${a!.id}/decision`).send({ signature: sigOf(agent.user), ...body });
    const rationale = 'Blank failed after lot B; both containers measured since the last clean blank are retested.';
    expect((await dec(op, { decision: 'none', rationale })).status).toBe(403);
    expect((await dec(qa, { decision: 'retest', retestContainerIds: [], rationale })).status).toBe(400);
    const stray = await dec(qa, { decision: 'retest', retestContainerIds: [lotA.containers[0].id], rationale });
    expect(stray.status).toBe(422);
    expect(stray.body.error.code).toBe('NOT_AFFECTED');
    const wrongPw = await qa.agent
      .post(`/api/impact-assessments/${a!.id}/decision`)
      .send({ decision: 'none', rationale, signature: { ...sigOf(qa.user), password: 'bad' } });
    expect(wrongPw.status).toBe(401);
    expect((await db()('check_impact_assessment').where({ id: a!.id }).first())!.status).toBe('open');
    const ids = lotB.containers.map((c) => c.id);
    const ok = await dec(qa, { decision: 'retest', retestContainerIds: ids, rationale });
    expect(ok.status, JSON.stringify(ok.body)).toBe(200);
    expect(ok.body).toMatchObject({ status: 'assessed', decision: 'retest', retestContainerIds: [...ids].sort() });
    expect(ok.body.signature).toMatchObject({ meaning: 'impact-assessed' });
    expect((await dec(qa, { decision: 'none', rationale })).status).toBe(409);
    // the database keeps the decision: no change, no deletion, for the owner too
    await expect(
      ownerDb()('check_impact_assessment').where({ id: a!.id }).update({ decision: 'none' }),
    ).rejects.toMatchObject(REFUSED);
    await expect(ownerDb()('check_impact_measurement').where({ assessment_id: a!.id }).del()).rejects.toMatchObject(
      REFUSED,
    );
  });

  it('a failed wavenumber check marks the passed lot and its certificate with a notice; the certificate stays byte for byte', async () => {
    const lot = await createPassedLot(db(), { containers: 2 });
    const cert = await issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: { id: null, name: 't' } });
    const before = await db()('certificate').where({ id: cert.id }).first('sha256', 'pdf');
    const m = await db()('measurement').where({ test_id: lot.testId }).first('instrument_id');
    const film = refData('atr-ftir/polystyrene_film.csv');
    const res = await check(op, m!.instrument_id, 'polystyrene', 'film-shifted.csv', shiftedCsv(film, 6));
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.verdict).toBe('fail');
    const a = await db()('check_impact_assessment').where({ instrument_check_id: res.body.id }).first();
    const view = (await qa.agent.get(`/api/impact-assessments/${a!.id}`)).body;
    expect(view.measurements.map((x: { measurementId: number }) => x.measurementId).sort()).toEqual(
      lot.containers.map((c) => c.measurementId).sort(),
    );
    expect(view.notices.map((n: { certificateId: number | null }) => n.certificateId).sort()).toEqual(
      [cert.id, null].sort(),
    );
    const notices = (await op.agent.get(`/api/lots/${lot.lotId}/impact-notices`)).body;
    expect(notices.find((n: { certificateId: number | null }) => n.certificateId === cert.id).notice).toMatch(/failed/);
    const after = await db()('certificate').where({ id: cert.id }).first('sha256', 'pdf');
    expect(after!.sha256).toBe(before!.sha256);
    expect(Buffer.compare(after!.pdf, before!.pdf)).toBe(0);
  });
});
