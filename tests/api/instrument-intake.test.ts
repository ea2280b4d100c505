/**
 * Export-folder intake (issue 15 items 1, 2, 3 and 6; docs/instrument-intake.md) on the real
 * MariaDB with a real watched folder in a temporary directory (chokidar, both with file-system
 * events and with polling). Files are written by the instrument simulator
 * (fixtures/instrument-simulator.ts) from real spectra of ../shared/reference-data (atr-ftir-fibres,
 * nylon 6,6), each a new acquisition (fresh noise).
 * Refusals tried here: manual upload where switched off (409), a settings folder outside the
 * export root or an unknown zone (422), a duplicate file from the folder (left unassigned with the
 * copy refusal), assigning without confirmation (400, the schema), by an operator who does not hold the test
 * (403), or twice (409), marking an attached file as not a sample (409).
 */
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import crypto from 'node:crypto';
import { execFile } from 'node:child_process';
import { promisify } from 'node:util';
import { TEST_DB } from './db-name';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { loadConfig, type AppConfig } from '../../server/lib/config';
import { startIntakeJob, type IntakeJob } from '../../server/modules/intake/watcher';
import { overdueAcquisitions } from '../../server/modules/intake/service';
import { simulateAcquisition } from '../../fixtures/instrument-simulator';
import { db } from './helpers';
import {
  agent,
  approvedMaterial,
  dataFile,
  FIBRES,
  fixtureQaAgent,
  flushMail,
  instrumentWithCheck,
  receiveLot,
  retire,
  startTest,
  uploadRequest,
  type ApprovedMaterial,
} from './fixtures-testing';

const root = fs.mkdtempSync(path.join(os.tmpdir(), 'drumline-intake-'));
process.env.INSTRUMENT_EXPORT_ROOT = root;
// a tight clock tolerance (15 s), so a simulated clock 40 s behind is warned about
process.env.CLOCK_TOLERANCE_MINUTES = '0.25';

type Signed = Awaited<ReturnType<typeof agent>>;

let nylon: ApprovedMaterial;
let instrument: { instrumentId: number; name: string };
let polled: { instrumentId: number; name: string };
let olga: Signed;
let otto: Signed;
let qa: Awaited<ReturnType<typeof fixtureQaAgent>>;
let job: IntakeJob;
let config: AppConfig;
const serial = async (id: number) => (await db()('instrument').where({ id }).first('serial_number'))!;

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 (intake)', referenceFiles: [FIBRES.nylon66Reference] });
  instrument = await instrumentWithCheck('valid');
  polled = await instrumentWithCheck('valid');
  olga = await agent(['operator']);
  otto = await agent(['operator']);
  qa = await fixtureQaAgent();
  config = loadConfig({ intakeStableMs: 600, intakePollMs: 250 });
  job = startIntakeJob(db(), config);
});

afterAll(async () => {
  await job.stop();
  await flushMail();
  await retire();
  fs.rmSync(root, { recursive: true, force: true });
});

async function setIntake(instrumentId: number, body: Record<string, unknown>) {
  return qa.agent.put(`/api/instruments/${instrumentId}/intake`).send({
    exportFolder: null,
    usePolling: false,
    manualUploadAllowed: true,
    timeZone: 'Europe/Berlin',
    reason: 'Export folder set up for the tests',
    ...body,
  });
}

async function simulate(
  inst: { instrumentId: number; name: string },
  folder: string,
  label: string,
  opts: { labelIn?: 'both' | 'name' | 'inside'; clock?: Date; pieces?: number; pauseMs?: number; sample?: string } = {},
) {
  const s = await serial(inst.instrumentId);
  const src = dataFile(opts.sample ?? FIBRES.nylon66Samples[0]);
  return simulateAcquisition({
    folder: path.join(root, folder),
    label,
    source: { bytes: new Uint8Array(src.buffer), name: src.name },
    instrument: { name: inst.name, serialNumber: s.serial_number },
    timeZone: 'Europe/Berlin',
    clock: opts.clock,
    labelIn: opts.labelIn,
    pieces: opts.pieces ?? 5,
    pauseMs: opts.pauseMs ?? 150,
  });
}

/** Waits until the watcher has decided about the file (an event exists), and returns its rows. */
async function decided(instrumentId: number, file: string, timeoutMs = 30_000) {
  const rel = path.basename(file);
  const until = Date.now() + timeoutMs;
  for (;;) {
    const rows = await db()('folder_acquisition').where({ instrument_id: instrumentId, relative_path: rel });
    if (rows.length) {
      const ev = await db()('folder_acquisition_event').where({ acquisition_id: rows[0].id }).orderBy('id');
      if (ev.length) return { rows, events: ev };
    }
    if (Date.now() > until) throw new Error(`the watcher did not take ${rel}`);
    await job.job.tick();
    await new Promise((r) => setTimeout(r, 200));
  }
}

const sha = (p: string) => crypto.createHash('sha256').update(fs.readFileSync(p)).digest('hex');

describe('intake settings', () => {
  it('QA sets the folder and switches manual upload off; recorded with the reason and audited', async () => {
    const res = await setIntake(instrument.instrumentId, { exportFolder: 'ftir-events', manualUploadAllowed: false });
    expect(res.status).toBe(200);
    expect(res.body.current).toMatchObject({
      exportFolder: 'ftir-events',
      manualUploadAllowed: false,
      timeZone: 'Europe/Berlin',
    });
    const audit = await db()('audit_event')
      .where({ action: 'instrument.intake-changed', entity_id: String(instrument.instrumentId) })
      .first();
    expect(audit!.reason).toBe('Export folder set up for the tests');
    expect(fs.statSync(path.join(root, 'ftir-events')).isDirectory()).toBe(true);
    expect((await setIntake(polled.instrumentId, { exportFolder: 'share/ftir-polled', usePolling: true })).status).toBe(
      200,
    );
  });

  it('refuses a folder outside the export root, an unknown zone, a folder of another instrument and no way in at all', async () => {
    const before = Number((await db()('instrument_intake_setting').count({ n: '*' }).first())!.n);
    for (const exportFolder of ['../outside', '/etc', 'a/../../b']) {
      const r = await setIntake(polled.instrumentId, { exportFolder });
      expect(r.status).toBe(422);
      expect(r.body.error.code).toBe('EXPORT_FOLDER_OUTSIDE_ROOT');
    }
    const zone = await setIntake(polled.instrumentId, { exportFolder: 'x', timeZone: 'Mars/Olympus' });
    expect(zone.status).toBe(422);
    expect(zone.body.error.code).toBe('UNKNOWN_TIME_ZONE');
    const taken = await setIntake(polled.instrumentId, { exportFolder: 'ftir-events' });
    expect(taken.status).toBe(409);
    expect(taken.body.error.code).toBe('EXPORT_FOLDER_IN_USE');
    const none = await setIntake(polled.instrumentId, { exportFolder: null, manualUploadAllowed: false });
    expect(none.status).toBe(422);
    expect(none.body.error.code).toBe('NO_WAY_IN');
    const op = await olga.agent.put(`/api/instruments/${polled.instrumentId}/intake`).send({
      exportFolder: 'y',
      usePolling: false,
      manualUploadAllowed: true,
      timeZone: 'Europe/Berlin',
      reason: 'operator tries',
    });
    expect(op.status).toBe(403);
    expect(Number((await db()('instrument_intake_setting').count({ n: '*' }).first())!.n)).toBe(before);
  });
});

describe('files from the export folder', () => {
  let lot: Awaited<ReturnType<typeof receiveLot>>;
  let testId: number;
  let first: string;

  beforeAll(async () => {
    lot = await receiveLot(olga.agent, nylon.materialId, 3);
    testId = await startTest(olga.agent, lot.id, instrument.instrumentId);
  });

  it('manual upload is refused where switched off (409), nothing stored', async () => {
    const before = Number((await db()('measurement').count({ n: '*' }).first())!.n);
    const res = await uploadRequest(
      olga.agent,
      testId,
      { containerId: lot.containers[0].id },
      FIBRES.nylon66Samples[0],
    );
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('MANUAL_UPLOAD_OFF');
    expect(res.body.error.message).toMatch(/switched off for this instrument/);
    expect(Number((await db()('measurement').count({ n: '*' }).first())!.n)).toBe(before);
  });

  it('a file written in pieces is taken once, when complete; the label in its name attaches it to its container', async () => {
    first = await simulate(instrument, 'ftir-events', lot.containers[0].label, {
      labelIn: 'name',
      pieces: 6,
      pauseMs: 200,
    });
    const { rows, events } = await decided(instrument.instrumentId, first);
    expect(rows).toHaveLength(1);
    expect(rows[0].sha256).toBe(sha(first));
    expect(rows[0].size).toBe(fs.statSync(first).size);
    expect(events.map((e) => e.event)).toEqual(['attached']);
    const m = await db()('measurement').where({ id: events[0].measurement_id! }).first();
    expect(m).toMatchObject({ test_id: testId, container_id: lot.containers[0].id, file_id: rows[0].file_id });
    expect(m!.created_by).toBe(olga.user.id);
    // taken once: a further tick (and chokidar's change events) add nothing
    await job.job.tick();
    expect(
      await db()('folder_acquisition').where({
        instrument_id: instrument.instrumentId,
        relative_path: path.basename(first),
      }),
    ).toHaveLength(1);
    expect(
      await db()('audit_event').where({ action: 'acquisition.received', entity_id: String(rows[0].id) }),
    ).toHaveLength(1);
    const review = await olga.agent.get(`/api/tests/${testId}/review`);
    const entry = review.body.history.find((h: { id: number }) => h.id === m!.id);
    expect(entry.provenance.source).toBe('export-folder');
    expect(entry.provenance.sourceText).toMatch(/^received from the instrument's export folder/);
  });

  it('the label in the sample identifier inside the file (not in its name) attaches it too', async () => {
    const f = await simulate(instrument, 'ftir-events', lot.containers[1].label, { labelIn: 'inside' });
    expect(path.basename(f)).not.toContain(lot.containers[1].label);
    const { rows, events } = await decided(instrument.instrumentId, f);
    expect(rows[0].label_found).toBe(lot.containers[1].label);
    expect(events.map((e) => e.event)).toEqual(['attached']);
    expect(events[0].container_id).toBe(lot.containers[1].id);
  });

  it('a duplicate (the same bytes under another name) is refused by the copy rule and left unassigned', async () => {
    // named for the third container, which has no result yet: the copy rule is what refuses it
    const copy = path.join(root, 'ftir-events', `${lot.containers[2].label}_copy.jdx`);
    fs.copyFileSync(first, copy);
    const { events } = await decided(instrument.instrumentId, copy);
    expect(events.map((e) => e.event)).toEqual(['unassigned']);
    expect(events[0].code).toBe('SPECTRUM_ALREADY_USED');
    expect(events[0].reason).toMatch(new RegExp(`container ${lot.containers[0].label}`));
  });

  let remeasure: number;
  let stray: number;
  it('a re-measurement of a container with a valid result and a file without a label stay unassigned', async () => {
    const again = await simulate(instrument, 'ftir-events', lot.containers[0].label);
    const a = await decided(instrument.instrumentId, again);
    expect(a.events[0]).toMatchObject({ event: 'unassigned', code: 'HAS_VALID_RESULT' });
    remeasure = a.rows[0].id;
    const noLabel = await simulate(instrument, 'ftir-events', 'background', { labelIn: 'name' });
    const b = await decided(instrument.instrumentId, noLabel);
    expect(b.events[0]).toMatchObject({ event: 'unassigned', code: 'NO_LABEL' });
    stray = b.rows[0].id;
    const list = await olga.agent.get(`/api/instruments/${instrument.instrumentId}/acquisitions?state=unassigned`);
    expect(list.status).toBe(200);
    expect(list.body.map((x: { id: number }) => x.id)).toEqual(expect.arrayContaining([remeasure, stray]));
    expect(list.body.every((x: { state: string }) => x.state === 'unassigned')).toBe(true);
    // every file received, latest first
    const all = await olga.agent.get(`/api/instruments/${instrument.instrumentId}/acquisitions`);
    expect(all.status).toBe(200);
    const ids = all.body.map((x: { id: number }) => x.id);
    expect(ids[0]).toBe(stray);
    expect(ids).toEqual([...ids].sort((x: number, y: number) => y - x));
    expect(new Set(all.body.map((x: { state: string }) => x.state))).toEqual(new Set(['attached', 'unassigned']));
  });

  it('the operator assigns an unassigned file with a confirmation (audited); refused unconfirmed, by another operator, or twice', async () => {
    const c = lot.containers[0];
    const unconfirmed = await olga.agent.post(`/api/acquisitions/${remeasure}/assign`).send({ containerId: c.id });
    expect(unconfirmed.status).toBe(400);
    expect(unconfirmed.body.error.message).toMatch(/Confirm that this acquisition/);
    const other = await otto.agent
      .post(`/api/acquisitions/${remeasure}/assign`)
      .send({ containerId: c.id, confirm: true, reason: 'Second scan after cleaning the crystal' });
    expect(other.status).toBe(403);
    const noReason = await olga.agent
      .post(`/api/acquisitions/${remeasure}/assign`)
      .send({ containerId: c.id, confirm: true });
    expect(noReason.status).toBe(422);
    expect(noReason.body.error.code).toBe('REMEASURE_REASON_REQUIRED');
    const ok = await olga.agent
      .post(`/api/acquisitions/${remeasure}/assign`)
      .send({ containerId: c.id, confirm: true, reason: 'Second scan after cleaning the crystal' });
    expect(ok.status).toBe(201);
    const ev = await db()('folder_acquisition_event').where({ acquisition_id: remeasure }).orderBy('id');
    expect(ev.map((e) => e.event)).toEqual(['unassigned', 'assigned']);
    expect(ev[1]).toMatchObject({ measurement_id: ok.body.id, created_by: olga.user.id });
    const audit = await db()('audit_event')
      .where({ action: 'acquisition.assigned', entity_id: String(remeasure) })
      .first();
    expect(audit!.actor_id).toBe(olga.user.id);
    const twice = await olga.agent
      .post(`/api/acquisitions/${remeasure}/assign`)
      .send({ containerId: c.id, confirm: true, reason: 'Second scan after cleaning the crystal' });
    expect(twice.status).toBe(409);
    expect(twice.body.error.code).toBe('ACQUISITION_DECIDED');
  });

  it('"not a sample" needs a reason and is final; an attached file cannot be set aside', async () => {
    const short = await olga.agent.post(`/api/acquisitions/${stray}/not-a-sample`).send({ reason: 'no' });
    expect(short.status).toBe(400);
    const ok = await olga.agent
      .post(`/api/acquisitions/${stray}/not-a-sample`)
      .send({ reason: 'Background scan of the empty crystal before the series' });
    expect(ok.status).toBe(200);
    const assign = await olga.agent
      .post(`/api/acquisitions/${stray}/assign`)
      .send({ containerId: lot.containers[2].id, confirm: true });
    expect(assign.status).toBe(409);
    const attached = (await db()('folder_acquisition_event')
      .where({ event: 'attached' })
      .orderBy('id', 'desc')
      .first())!.acquisition_id;
    const setAside = await olga.agent
      .post(`/api/acquisitions/${attached}/not-a-sample`)
      .send({ reason: 'trying to hide a measurement' });
    expect(setAside.status).toBe(409);
  });

  it('reconciliation: the test window lists every acquisition, assigned or not; QA sees those unassigned too long', async () => {
    const view = await olga.agent.get(`/api/tests/${testId}/acquisitions`);
    expect(view.status).toBe(200);
    const states = new Map(view.body.acquisitions.map((a: { id: number; state: string }) => [a.id, a.state]));
    expect(states.get(remeasure)).toBe('assigned');
    expect(states.get(stray)).toBe('not-a-sample');
    expect([...states.values()]).toEqual(expect.arrayContaining(['attached', 'unassigned']));
    expect(view.body.acquisitions.length).toBeGreaterThanOrEqual(5);
    expect(view.body.manualUploads).toEqual([]);
    // the site's setting (24 h): nothing received just now is overdue; with 0 h every unassigned one is
    const qaList = await qa.agent.get('/api/acquisitions/overdue');
    expect(qaList.status).toBe(200);
    expect(qaList.body.hours).toBe(24);
    expect(
      qaList.body.acquisitions.filter((a: { instrumentId: number }) => a.instrumentId === instrument.instrumentId),
    ).toEqual([]);
    const now = await overdueAcquisitions(db(), loadConfig({ unassignedAcquisitionHours: 0 }));
    const ids = now.acquisitions.map((a) => a.id);
    const duplicate = view.body.acquisitions.find(
      (a: { stateCode: string }) => a.stateCode === 'SPECTRUM_ALREADY_USED',
    );
    expect(ids).toContain(duplicate.id);
    expect(ids).not.toContain(remeasure);
    expect(ids).not.toContain(stray);
    expect((await olga.agent.get('/api/acquisitions/overdue')).status).toBe(403);
  });
});

describe('polling (a mounted share) and the instrument clock', () => {
  it('a polled folder takes a file written in pieces once; a clock 40 s behind is recorded and warned about', async () => {
    const lot = await receiveLot(olga.agent, nylon.materialId, 1);
    const testId = await startTest(olga.agent, lot.id, polled.instrumentId);
    const f = await simulate(polled, 'share/ftir-polled', lot.containers[0].label, {
      clock: new Date(Date.now() - 40_000),
      pieces: 4,
      pauseMs: 200,
    });
    const { rows, events } = await decided(polled.instrumentId, f);
    expect(rows).toHaveLength(1);
    expect(rows[0].sha256).toBe(sha(f));
    expect(events[0].event).toBe('attached');
    // JCAMP-DX time without a zone, read in the instrument's zone (Europe/Berlin): about 40 s before receipt
    expect(rows[0].acquired_zone).toBe('Europe/Berlin');
    expect(rows[0].clock_offset_seconds).toBeGreaterThanOrEqual(39);
    expect(rows[0].clock_offset_seconds).toBeLessThan(40 + 30);
    const review = await olga.agent.get(`/api/tests/${testId}/review`);
    const p = review.body.history[0].provenance;
    expect(p.clockOffsetSeconds).toBe(rows[0].clock_offset_seconds);
    expect(p.clockWarning).toMatch(/before it reached the server \(site tolerance 0.25 min\)/);
    // manual upload stays allowed here
    const manual = await uploadRequest(
      olga.agent,
      testId,
      { containerId: lot.containers[0].id, reason: 'hand upload' },
      FIBRES.nylon66Samples[1],
    );
    expect(manual.status).toBe(201);
    const fresh = await olga.agent.get(`/api/tests/${testId}/review`);
    expect(fresh.body.history[1].provenance).toMatchObject({ source: 'manual-upload', clockWarning: null });
  });
});

describe('the simulator command (npm run instrument:simulate)', () => {
  it('each run writes a new acquisition into the folder: the first becomes the measurement, the second waits for a reason', async () => {
    const lot = await receiveLot(olga.agent, nylon.materialId, 1);
    await startTest(olga.agent, lot.id, instrument.instrumentId);
    const label = lot.containers[0].label;
    const run = () =>
      promisify(execFile)(
        process.execPath,
        ['--import', 'tsx', 'scripts/instrument-simulate.ts', '--instrument', instrument.name, '--label', label],
        { env: { ...process.env, DRUMLINE_DB_NAME: TEST_DB, INSTRUMENT_EXPORT_ROOT: root }, timeout: 60_000 },
      );
    const written: string[] = [];
    for (let i = 0; i < 2; i++) {
      const out = await run();
      const m = /wrote (.+)\n/.exec(out.stdout);
      expect(m).not.toBeNull();
      written.push(path.resolve(m![1]));
    }
    expect(written[0]).not.toBe(written[1]);
    expect(sha(written[0])).not.toBe(sha(written[1]));
    const a = await decided(instrument.instrumentId, written[0]);
    const b = await decided(instrument.instrumentId, written[1]);
    expect(a.events[0]).toMatchObject({ event: 'attached', container_id: lot.containers[0].id });
    expect(b.events[0]).toMatchObject({ event: 'unassigned', code: 'HAS_VALID_RESULT' });
  });
});
