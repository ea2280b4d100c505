/**
 * Provenance of every measurement (issue 11 item 1; docs/provenance.md), on the real MariaDB.
 * Each path of the issue that let a wrong or untested container pass is tried here and must now
 * be refused with its sentence and store nothing (rows counted before and after):
 * - the same file for several containers, and for all drums of a lot;
 * - an approved reference's own file as a sample, and a re-export of it;
 * - an instrument check's film spectrum as a sample;
 * - a re-export of a stored sample (points reversed, other decimals, other header);
 * - an acquisition before the instrument check, in the future, or on another instrument (serial);
 * - a file whose own title or sample identifier names another container, lot or material;
 * - a re-measurement of a container with a pass and no reason;
 * - an operator adding measurements to an attempt they neither started nor were handed;
 * - re-measuring an invalid container without end (blocked after the site's limit; QA releases, signed).
 * A real replicate scan of the reference's sample (../shared/reference-data, atr-ftir-fibres
 * nylon66_s091 scans 1 and 2) is still accepted. The review lists every measurement in order.
 */
import request from 'supertest';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { createApp } from '../../server/app';
import { readSpectrum } from '../../server/spectra';
import { TEST_DB } from './db-name';
import { db, makeUser, PASSWORD, sig } from './helpers';
import {
  agent,
  approvedMaterial,
  dataFile,
  distinctAcquisition,
  FIBRES,
  flushMail,
  instrumentWithCheck,
  receiveLot,
  retire,
  startTest,
  upload,
  uploadRequest,
  type ApprovedMaterial,
} from './fixtures-testing';

type Signed = Awaited<ReturnType<typeof agent>>;

let nylon: ApprovedMaterial;
let pet: ApprovedMaterial;
let instrument: { instrumentId: number; checkId: number | null; name: string };
let olga: Signed;

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 (provenance)', referenceFiles: [FIBRES.nylon66Reference] });
  pet = await approvedMaterial({ name: 'PET (provenance)', referenceFiles: [FIBRES.petReference] });
  instrument = await instrumentWithCheck('valid');
  olga = await agent(['operator']);
});

afterAll(async () => {
  await flushMail();
  await retire();
});

async function counts() {
  const k = db();
  const n = async (t: string) => Number((await k(t).count({ n: '*' }).first())!.n);
  return {
    storedFile: await n('stored_file'),
    measurement: await n('measurement'),
    fingerprint: await n('spectrum_fingerprint'),
    provenance: await n('measurement_provenance'),
    audit: await n('audit_event'),
  };
}

async function newTest(containers = 2, by: Signed = olga) {
  const lot = await receiveLot(by.agent, nylon.materialId, containers);
  const testId = await startTest(by.agent, lot.id, instrument.instrumentId);
  return { lot, testId };
}

function send(
  a: Signed,
  testId: number,
  containerId: number,
  bytes: Buffer,
  name: string,
  extra: Record<string, string> = {},
) {
  const req = a.agent.post(`/api/tests/${testId}/measurements`).field('containerId', String(containerId));
  for (const [k, v] of Object.entries(extra)) req.field(k, v);
  return req.attach('file', bytes, { filename: name, contentType: 'text/plain' });
}

/** A JCAMP-DX file of a spectrum with the given header records (JCAMP-DX 4.24/5.01 LDRs). */
function jcamp(bytes: Buffer, header: string[]): Buffer {
  const s = readSpectrum(new Uint8Array(bytes), 'x.csv');
  const lines = [
    '##TITLE=nylon yarn, container sample',
    '##JCAMP-DX=5.01',
    '##DATA TYPE=INFRARED SPECTRUM',
    ...header,
    '##XUNITS=1/CM',
    '##YUNITS=ABSORBANCE',
    `##NPOINTS=${s.x.length}`,
    '##XYPOINTS=(XY..XY)',
  ];
  for (let i = 0; i < s.x.length; i++) lines.push(`${s.x[i]}, ${s.y[i]}`);
  lines.push('##END=');
  return Buffer.from(lines.join('\n'));
}

describe('the same spectrum is never a second measurement', () => {
  it('the same file for a second container is refused, naming the container and lot it was used for; nothing stored', async () => {
    const { lot, testId } = await newTest(2);
    const f = distinctAcquisition(FIBRES.nylon66Samples[0]);
    expect((await send(olga, testId, lot.containers[0].id, f.buffer, f.name)).status).toBe(201);
    const before = await counts();
    const res = await send(olga, testId, lot.containers[1].id, f.buffer, 'renamed.csv');
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('SPECTRUM_ALREADY_USED');
    expect(res.body.error.message).toContain(`container ${lot.containers[0].label} of lot ${lot.lotNumber}`);
    expect(res.body.error.message).toMatch(/byte for byte/);
    expect(await counts()).toEqual(before);
  });

  it('all drums of a lot with one file: only the first is stored', async () => {
    const { lot, testId } = await newTest(4);
    const f = distinctAcquisition(FIBRES.nylon66Samples[1]);
    const statuses = [];
    for (const c of lot.containers) statuses.push((await send(olga, testId, c.id, f.buffer, `${c.label}.csv`)).status);
    expect(statuses).toEqual([201, 422, 422, 422]);
    expect(Number((await db()('measurement').where({ test_id: testId }).count({ n: '*' }).first())!.n)).toBe(1);
  });

  it("an approved reference's own file as a sample is refused, naming the reference and material", async () => {
    const { lot, testId } = await newTest(1);
    const ref = dataFile(FIBRES.nylon66Reference);
    const before = await counts();
    const res = await send(olga, testId, lot.containers[0].id, ref.buffer, ref.name);
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/reference REF-\S+ of material \S+/);
    expect(await counts()).toEqual(before);
  });

  it('the same decoded values under another header are refused (decoded spectrum identical)', async () => {
    const { lot, testId } = await newTest(2);
    const f = distinctAcquisition(FIBRES.nylon66Samples[2]);
    expect((await send(olga, testId, lot.containers[0].id, f.buffer, f.name)).status).toBe(201);
    const other = Buffer.from(`exported again\n${f.buffer.toString('utf8')}`);
    const before = await counts();
    const res = await send(olga, testId, lot.containers[1].id, other, 'other-header.csv');
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/same spectrum \(the same x and y values\)/);
    expect(res.body.error.message).toContain(lot.containers[0].label);
    expect(await counts()).toEqual(before);
  });

  it('a re-export (points reversed, 5 decimals, semicolons, another header) of a stored sample is refused', async () => {
    const { lot, testId } = await newTest(2);
    const f = distinctAcquisition(FIBRES.nylon66Samples[0]);
    expect((await send(olga, testId, lot.containers[0].id, f.buffer, f.name)).status).toBe(201);
    const s = readSpectrum(new Uint8Array(f.buffer), f.name);
    const lines = ['Spectrum export', 'cm-1;A'];
    for (let i = s.x.length - 1; i >= 0; i--) lines.push(`${s.x[i].toFixed(2)};${s.y[i].toFixed(5)}`);
    const before = await counts();
    const res = await send(olga, testId, lot.containers[1].id, Buffer.from(lines.join('\r\n')), 'export2.csv');
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(
      /re-export of the acquisition already stored as the measurement of container/,
    );
    expect(res.body.error.message).toContain(lot.containers[0].label);
    expect(await counts()).toEqual(before);
  });

  it("a JCAMP-DX transmittance re-export of the reference's file is refused", async () => {
    const { lot, testId } = await newTest(1);
    const s = readSpectrum(new Uint8Array(dataFile(FIBRES.nylon66Reference).buffer), 'r.csv');
    const lines = ['##TITLE=yarn', '##JCAMP-DX=4.24', '##DATA TYPE=INFRARED SPECTRUM', '##XUNITS=1/CM'];
    lines.push('##YUNITS=TRANSMITTANCE', `##NPOINTS=${s.x.length}`, '##XYPOINTS=(XY..XY)');
    for (let i = 0; i < s.x.length; i++) lines.push(`${s.x[i]}, ${(10 ** -s.y[i]).toPrecision(9)}`);
    lines.push('##END=');
    const res = await send(olga, testId, lot.containers[0].id, Buffer.from(lines.join('\n')), 'yarn.jdx');
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/re-export of the acquisition already stored as reference REF-/);
  });

  it("an instrument check's polystyrene film file as a sample is refused, naming the instrument check", async () => {
    const { lot, testId } = await newTest(1);
    const film = dataFile('atr-ftir/polystyrene_film.csv');
    const res = await send(olga, testId, lot.containers[0].id, film.buffer, 'sample.csv');
    expect(res.status).toBe(422);
    expect(res.body.error.message).toMatch(/instrument check \d+ of instrument/);
  });

  it('a real replicate scan of the reference sample (another acquisition) is accepted', async () => {
    // nylon66_s091 scan 2 against the reference made from scan 1 (../shared/reference-data)
    const { lot, testId } = await newTest(1);
    const r2 = dataFile(FIBRES.nylon66Samples[0]);
    const res = await send(olga, testId, lot.containers[0].id, r2.buffer, r2.name);
    expect(res.status, JSON.stringify(res.body)).toBe(201);
    expect(res.body.verdict).toBe('pass');
  });
});

describe('what the file states about its acquisition', () => {
  it('an acquisition before the instrument check, or in the future, is refused; nothing stored', async () => {
    const { lot, testId } = await newTest(1);
    const f = distinctAcquisition(FIBRES.nylon66Samples[1]);
    const before = await counts();
    const old = await send(
      olga,
      testId,
      lot.containers[0].id,
      jcamp(f.buffer, ['##LONGDATE=2019/05/04 10:00:00']),
      'a.jdx',
    );
    expect(old.status).toBe(422);
    expect(old.body.error.code).toBe('ACQUIRED_BEFORE_CHECK');
    expect(old.body.error.message).toMatch(/before the instrument check this test relies on/);
    const next = new Date(Date.now() + 3 * 86_400_000).toISOString().slice(0, 10).replace(/-/g, '/');
    const future = await send(olga, testId, lot.containers[0].id, jcamp(f.buffer, [`##LONGDATE=${next}`]), 'b.jdx');
    expect(future.status).toBe(422);
    expect(future.body.error.code).toBe('ACQUIRED_IN_FUTURE');
    expect(await counts()).toEqual(before);
  });

  it("a serial in the file that is not the test instrument's is refused; the right one is kept", async () => {
    const { lot, testId } = await newTest(2);
    const f = distinctAcquisition(FIBRES.nylon66Samples[1]);
    const before = await counts();
    const wrong = await send(
      olga,
      testId,
      lot.containers[0].id,
      jcamp(f.buffer, ['##SPECTROMETER/DATA SYSTEM=FT-IR bench S/N: ZZ-0001']),
      'c.jdx',
    );
    expect(wrong.status).toBe(422);
    expect(wrong.body.error.code).toBe('INSTRUMENT_SERIAL_MISMATCH');
    expect(wrong.body.error.message).toContain('ZZ-0001');
    expect(await counts()).toEqual(before);
    const now = new Date(Date.now() - 1000);
    const p = (v: number) => String(v).padStart(2, '0');
    const stamp = `${now.getUTCFullYear()}/${p(now.getUTCMonth() + 1)}/${p(now.getUTCDate())} ${p(now.getUTCHours())}:${p(now.getUTCMinutes())}:${p(now.getUTCSeconds())} +0000`;
    const ok = await send(
      olga,
      testId,
      lot.containers[0].id,
      jcamp(f.buffer, [`##LONGDATE=${stamp}`, `##$SERIAL NUMBER=SN-${instrument.name}`]),
      'd.jdx',
    );
    expect(ok.status, JSON.stringify(ok.body)).toBe(201);
    const plain = distinctAcquisition(FIBRES.nylon66Samples[2]);
    expect((await send(olga, testId, lot.containers[1].id, plain.buffer, plain.name)).status).toBe(201);
    const review = await olga.agent.get(`/api/tests/${testId}/review`);
    const [a, b] = review.body.history;
    expect(a.provenance).toMatchObject({
      acquiredJudgement: 'consistent',
      statedSerial: `SN-${instrument.name}`,
      serialJudgement: 'matches',
    });
    expect(Math.abs(new Date(a.provenance.acquiredAt).getTime() - now.getTime())).toBeLessThan(2000);
    expect(b.provenance).toMatchObject({ acquiredJudgement: 'not-stated', serialJudgement: 'not-stated' });
  });
});

describe('a file that names another record', () => {
  it("a title naming another lot's container needs the operator's confirmation, and the verifier sees it", async () => {
    const other = await newTest(1);
    const { lot, testId } = await newTest(1);
    const f = distinctAcquisition(FIBRES.nylon66Samples[0]);
    const text = `${other.lot.containers[0].label} nylon yarn\n${f.buffer.toString('utf8')}`;
    const before = await counts();
    const res = await send(olga, testId, lot.containers[0].id, Buffer.from(text), 'scan.csv');
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('CONFIRM_FILE_IDENTIFIERS');
    expect(res.body.error.message).toContain(
      `container ${other.lot.containers[0].label} of lot ${other.lot.lotNumber}`,
    );
    expect(res.body.verdict).toBeUndefined();
    expect(await counts()).toEqual(before);
    const ok = await send(olga, testId, lot.containers[0].id, Buffer.from(text), 'scan.csv', {
      confirmIdentifiers: 'true',
    });
    expect(ok.status).toBe(201);
    const review = await olga.agent.get(`/api/tests/${testId}/review`);
    expect(review.body.history[0].provenance.identifierFindings[0]).toMatchObject({
      text: other.lot.containers[0].label,
      kind: 'container',
    });
    expect(review.body.history[0].provenance.identifiersConfirmed).toBe(true);
  });

  it("a supplier's own lot number and the container's own label are not a mismatch", async () => {
    const { lot, testId } = await newTest(1);
    const f = distinctAcquisition(FIBRES.nylon66Samples[1]);
    const text = `${lot.containers[0].label} supplier lot SL-2026-00017\n${f.buffer.toString('utf8')}`;
    expect((await send(olga, testId, lot.containers[0].id, Buffer.from(text), 'own.csv')).status).toBe(201);
  });

  it('a site that refuses such files (FILE_IDENTIFIER_POLICY=refuse) refuses it even when confirmed', async () => {
    const app = createApp({
      database: TEST_DB,
      config: { signInRateLimit: 10_000, fileIdentifierPolicy: 'refuse' },
    }).app;
    const u = await makeUser(['operator']);
    const a = request.agent(app);
    expect((await a.post('/api/auth/sign-in').send({ username: u.username, password: PASSWORD })).status).toBe(200);
    const lot = await receiveLot(a, nylon.materialId, 1);
    const testId = await startTest(a, lot.id, instrument.instrumentId);
    const f = distinctAcquisition(FIBRES.nylon66Samples[2]);
    const code = (await db()('material').where({ id: pet.materialId }).first('code'))!.code;
    const text = `material ${code}\n${f.buffer.toString('utf8')}`;
    const before = await counts();
    const res = await a
      .post(`/api/tests/${testId}/measurements`)
      .field('containerId', String(lot.containers[0].id))
      .field('confirmIdentifiers', 'true')
      .attach('file', Buffer.from(text), { filename: 's.csv', contentType: 'text/csv' });
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('FILE_NAMES_OTHER_RECORD');
    expect(res.body.error.message).toContain(`material ${code}`);
    expect(await counts()).toEqual(before);
    await db()('app_user').where({ id: u.id }).update({ active: 0 });
  });
});

describe('re-measurement, the holder of an attempt, and the review', () => {
  it('a container with a pass is measured again only with a reason; the review shows every measurement in order', async () => {
    const { lot, testId } = await newTest(1);
    const first = await upload(olga.agent, testId, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[0]);
    expect(first.verdict).toBe('pass');
    const before = await counts();
    const res = await uploadRequest(
      olga.agent,
      testId,
      { containerId: lot.containers[0].id },
      FIBRES.nylon66Samples[1],
    );
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('REMEASURE_REASON_REQUIRED');
    expect(res.body.error.message).toMatch(/needs a reason/);
    expect(await counts()).toEqual(before);
    const reason = 'Powder did not cover the crystal fully; measured again.';
    const second = await upload(
      olga.agent,
      testId,
      { containerId: lot.containers[0].id, reason },
      FIBRES.nylon66Samples[1],
    );
    const audit = await db()('audit_event')
      .where({ entity_type: 'measurement', entity_id: String(second.id) })
      .first();
    expect(audit!.reason).toBe(reason);
    const review = await olga.agent.get(`/api/tests/${testId}/review`);
    expect(review.body.history.map((h: { id: number; state: string }) => [h.id, h.state])).toEqual([
      [first.id, 'superseded'],
      [second.id, 'current'],
    ]);
    expect(review.body.history[1].provenance).toMatchObject({ remeasureReason: reason, remeasureOf: first.id });
    expect(review.body.history[0].measuredBy).toBe(olga.user.fullName);
    // the attempt's history lists its measurement events
    const qa = await agent(['qa_manager']);
    const hist = await qa.agent.get(`/api/history/identity_test/${testId}`);
    expect(hist.status).toBe(200);
    const actions = hist.body.events.map((e: { action: string }) => e.action);
    expect(actions.filter((a: string) => a === 'measurement.recorded')).toHaveLength(2);
  });

  it('another operator cannot add measurements to an attempt until it is handed over (recorded, audited)', async () => {
    const { lot, testId } = await newTest(2);
    const other = await agent(['operator']);
    const before = await counts();
    const res = await uploadRequest(
      other.agent,
      testId,
      { containerId: lot.containers[0].id },
      FIBRES.nylon66Samples[0],
    );
    expect(res.status).toBe(403);
    expect(res.body.error.message).toMatch(/only the operator who started it, or the one it was handed over to/);
    expect(await counts()).toEqual(before);
    // the other operator cannot take it over either
    const grab = await other.agent
      .post(`/api/tests/${testId}/hand-over`)
      .send({ toUserId: other.user.id, reason: 'taking it over' });
    expect(grab.status).toBe(403);
    const h = await olga.agent
      .post(`/api/tests/${testId}/hand-over`)
      .send({ toUserId: other.user.id, reason: 'End of shift; colleague continues.' });
    expect(h.status).toBe(200);
    const ev = await db()('audit_event')
      .where({ action: 'test.handed-over', entity_id: String(testId) })
      .first();
    expect(ev!.reason).toBe('End of shift; colleague continues.');
    expect(
      (await uploadRequest(other.agent, testId, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[0]))
        .status,
    ).toBe(201);
    // and olga no longer holds it
    expect(
      (await uploadRequest(olga.agent, testId, { containerId: lot.containers[1].id }, FIBRES.nylon66Samples[1])).status,
    ).toBe(403);
  });
});

describe('a container that keeps giving invalid measurements', () => {
  it('is blocked after 3 invalid measurements, QA is told, and only a signed QA release lets it go on', async () => {
    const { lot, testId } = await newTest(1);
    const c = lot.containers[0];
    for (let i = 0; i < 3; i++) {
      const m = await upload(olga.agent, testId, { containerId: c.id }, FIBRES.weakAcrylic);
      expect(m.verdict).toBe('invalid');
    }
    const block = await db()('audit_event')
      .where({ action: 'container.blocked', entity_id: String(c.id) })
      .first();
    expect(block).toBeTruthy();
    const mail = await db()('mail_outbox').where('subject', 'like', `%container ${c.label} blocked%`);
    expect(mail.length).toBeGreaterThan(0);
    const before = await counts();
    const res = await uploadRequest(olga.agent, testId, { containerId: c.id }, FIBRES.nylon66Samples[0]);
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('CONTAINER_BLOCKED');
    expect(await counts()).toEqual(before);
    const qa = await agent(['qa_manager']);
    const queue = await qa.agent.get('/api/work-queue?full=blocked-containers');
    const section = queue.body.sections.find((s: { key: string }) => s.key === 'blocked-containers');
    expect(section.items.map((i: { id: number }) => i.id)).toContain(c.id);
    // the operator cannot release it; QA needs a reason and the password
    expect(
      (
        await olga.agent
          .post(`/api/containers/${c.id}/release`)
          .send({ reason: 'x'.repeat(30), signature: sig(olga.user) })
      ).status,
    ).toBe(403);
    const wrong = await qa.agent.post(`/api/containers/${c.id}/release`).send({
      reason: 'Crystal cleaned, clamp replaced; measure again.',
      signature: { username: qa.user.username, password: 'wrong' },
    });
    expect(wrong.status).toBe(401);
    const rel = await qa.agent
      .post(`/api/containers/${c.id}/release`)
      .send({ reason: 'Crystal cleaned, clamp replaced; measure again.', signature: sig(qa.user) });
    expect(rel.status).toBe(200);
    const signed = await db()('e_signature').where({ entity_type: 'container_block', meaning: 'block-released' });
    expect(signed.length).toBeGreaterThan(0);
    const again = await upload(olga.agent, testId, { containerId: c.id }, FIBRES.nylon66Samples[0]);
    expect(again.verdict).toBe('pass');
    const review = await olga.agent.get(`/api/tests/${testId}/review`);
    expect(review.body.history.map((h: { verdict: string }) => h.verdict)).toEqual([
      'invalid',
      'invalid',
      'invalid',
      'pass',
    ]);
  });
});
