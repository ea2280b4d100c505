/**
 * Lot receipt, container labels and every-container testing, against the real MariaDB and the
 * real engine with real spectra from ../shared/reference-data (see fixtures-testing.ts).
 *
 * Rules checked and their sources:
 * - every container gets its own identity test: EU GMP Annex 8 para 2; 21 CFR 211.84(d)(1);
 *   a lot is held in quarantine until tested and released: 21 CFR 211.84(a);
 * - an instrument without a passing, unexpired wavenumber check is refused: Ph. Eur. 2.2.24
 *   (control of the wavenumber scale with polystyrene), docs/architecture.md, "The identity flow";
 * - raw data kept byte for byte with its SHA-256 and never overwritten: 21 CFR 11.10(e),
 *   ALCOA+ "original" (PIC/S PI 041-1); a refused file stores nothing partial (docs/architecture.md, "The identity flow");
 * - a measurement refused by the quality gate is neither pass nor fail (docs/architecture.md, "The identity flow").
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { sha256Hex } from '../../server/lib/canonical';
import { binaryBody, db, sig, untyped } from './helpers';
import {
  approvedMaterial,
  lastUploadedBytes,
  FIBRES,
  flushMail,
  account,
  agent,
  retire,
  instrumentWithCheck,
  receiveLot,
  startTest,
  supplierFor,
  upload,
  uploadRequest,
  writeCounts,
  type ApprovedMaterial,
} from './fixtures-testing';

let nylon: ApprovedMaterial;
let operator: Awaited<ReturnType<typeof agent>>;
let instrument: { instrumentId: number };

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 staple fibre', referenceFiles: [FIBRES.nylon66Reference] });
  operator = await agent(['operator']);
  instrument = await instrumentWithCheck('valid');
});

afterAll(async () => {
  await flushMail();
  await retire();
});

describe('lot receipt', () => {
  it('registers a lot in quarantine with an internal number and one labelled container per drum, audited', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 3, { notes: 'three drums, seals intact' });
    expect(lot.lotNumber).toMatch(/^L-\d{4}-\d{5}$/);
    expect(lot).toMatchObject({
      status: 'quarantine',
      identityStatus: 'awaiting-testing',
      containerCount: 3,
      notes: 'three drums, seals intact',
    });
    expect(lot.containers.map((c) => c.label)).toEqual([
      `${lot.lotNumber}-001`,
      `${lot.lotNumber}-002`,
      `${lot.lotNumber}-003`,
    ]);
    const ev = await db()('audit_event')
      .where({ action: 'lot.received', entity_id: String(lot.id) })
      .first();
    expect(ev).toBeDefined();
    expect(JSON.parse(ev!.after_json!).labels).toHaveLength(3);
    expect(ev!.actor_id).toBe(operator.user.id);
  });

  it('accepts only grades with an approved method and at least one approved reference', async () => {
    const k = db();
    const qa = await account(['qa_manager']);
    const now = new Date();
    const [noMethod] = await k('material').insert({
      code: 'NOMETH' + Date.now(),
      name: 'No method yet',
      grade: '',
      monograph_ref: '',
      techniques: '["mid-ir-atr"]',
      active: 1,
      created_by: qa.id,
      created_at: now,
      updated_at: now,
    });
    const noRef = await approvedMaterial({ name: 'Method but no reference', referenceFiles: [] });
    for (const id of [noMethod, noRef.materialId]) {
      const res = await operator.agent.post('/api/lots').send({
        materialId: id,
        supplierId: (await supplierFor(nylon.materialId)).supplierId,
        supplierLot: 'A1',
        containerCount: 2,
        receivedDate: '2026-01-05',
      });
      expect(res.status).toBe(422);
      expect(res.body.error.code).toBe('MATERIAL_NOT_RECEIVABLE');
      expect(res.body.error.message).toMatch(/approved/);
    }
    const list = await operator.agent.get('/api/lots/receivable-materials');
    const ids = list.body.map((m: { id: number }) => m.id);
    expect(ids).toContain(nylon.materialId);
    expect(ids).not.toContain(noMethod);
    expect(ids).not.toContain(noRef.materialId);
  });

  it('refuses 0 and 1000 containers, a future date, and non-operators', async () => {
    const base = {
      materialId: nylon.materialId,
      supplierId: (await supplierFor(nylon.materialId)).supplierId,
      supplierLot: 'A1',
      receivedDate: '2026-01-05',
    };
    expect((await operator.agent.post('/api/lots').send({ ...base, containerCount: 0 })).status).toBe(400);
    expect((await operator.agent.post('/api/lots').send({ ...base, containerCount: 1000 })).status).toBe(400);
    expect((await operator.agent.post('/api/lots').send({ ...base, containerCount: 2.5 })).status).toBe(400);
    const future = new Date(Date.now() + 3 * 86400_000).toISOString().slice(0, 10);
    const f = await operator.agent.post('/api/lots').send({ ...base, containerCount: 2, receivedDate: future });
    expect(f.status).toBe(422);
    expect(f.body.error.code).toBe('DATE_IN_FUTURE');
    const verifier = await agent(['verifier']);
    expect((await verifier.agent.post('/api/lots').send({ ...base, containerCount: 2 })).status).toBe(403);
  });

  it('gives 10 lots received at the same moment 10 different, consecutive numbers', async () => {
    const { supplierId } = await supplierFor(nylon.materialId);
    const results = await Promise.all(
      Array.from({ length: 10 }, (_, i) =>
        operator.agent.post('/api/lots').send({
          materialId: nylon.materialId,
          supplierId,
          supplierLot: `P${i}`,
          containerCount: 2,
          receivedDate: '2026-01-05',
        }),
      ),
    );
    expect(results.map((r) => r.status)).toEqual(Array(10).fill(201));
    const numbers = results.map((r) => r.body.lotNumber as string).sort();
    expect(new Set(numbers).size).toBe(10);
    const seqs = numbers.map((n) => Number(n.slice(-5)));
    expect(seqs[9] - seqs[0]).toBe(9);
    const labels = results.flatMap((r) => r.body.containers.map((c: { label: string }) => c.label));
    expect(new Set(labels).size).toBe(20);
  });

  it('handles the largest lot, 999 containers, labelled -001 to -999', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 999);
    expect(lot.containers).toHaveLength(999);
    expect(lot.containers[998].label).toBe(`${lot.lotNumber}-999`);
  });

  it('prints a label sheet PDF with each label as text and as a QR code', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 23);
    const res = await operator.agent.get(`/api/lots/${lot.id}/labels.pdf`).buffer(true).parse(binaryBody);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'labels-'));
    const file = path.join(dir, 'labels.pdf');
    fs.writeFileSync(file, res.body as Buffer);
    // poppler-utils: 21 labels per A4 page -> 23 labels on 2 pages, every label readable as text.
    expect(execFileSync('pdfinfo', [file]).toString()).toMatch(/Pages:\s+2/);
    const text = execFileSync('pdftotext', ['-layout', file, '-']).toString();
    for (const c of lot.containers) expect(text).toContain(c.label);
    expect(text).toContain('Container 23 of 23');
    // The QR codes are drawn as filled squares ("re" operators): a sheet without them has only
    // the table rules. A version-2 QR (25 x 25 modules) has a few hundred dark modules.
    const qdf = path.join(dir, 'labels.qdf');
    try {
      execFileSync('qpdf', ['--qdf', '--object-streams=disable', file, qdf]);
    } catch {
      /* qpdf exits 3 on warnings; the output is written */
    }
    const rects = (fs.readFileSync(qdf, 'latin1').match(/ re\b/g) ?? []).length;
    expect(rects).toBeGreaterThan(23 * 100);
    const ev = await db()('audit_event')
      .where({ action: 'lot.labels-printed', entity_id: String(lot.id) })
      .first();
    expect(ev).toBeDefined();
  });
});

describe('instrument check before testing', () => {
  it.each([
    ['none', /no instrument check/],
    ['expired', /due/],
    ['failed', /failed/],
  ] as const)('refuses an instrument whose check is %s, with a sentence, and starts nothing', async (state, msg) => {
    const bad = await instrumentWithCheck(state);
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const res = await operator.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId: bad.instrumentId });
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('INSTRUMENT_CHECK_DUE');
    expect(res.body.error.message).toMatch(msg);
    expect(await db()('identity_test').where({ lot_id: lot.id })).toHaveLength(0);
  });

  it('a later failing check overrides an earlier passing one', async () => {
    const inst = await instrumentWithCheck('valid');
    const k = db();
    const check = (await k('instrument_check').where({ id: inst.checkId! }).first())!;
    await k('instrument_check').insert({
      ...check,
      id: undefined,
      verdict: 'fail',
      valid_until: null,
      performed_at: new Date(),
    });
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const res = await operator.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId: inst.instrumentId });
    expect(res.status).toBe(409);
    expect(res.body.error.message).toMatch(/last instrument check .* failed/);
  });

  it('refuses an instrument of the wrong technique for the method', async () => {
    const nir = await instrumentWithCheck('valid', { technique: 'nir', sampling: 'diffuse-reflectance' });
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const res = await operator.agent.post(`/api/lots/${lot.id}/tests`).send({ instrumentId: nir.instrumentId });
    expect(res.status).toBe(422);
    expect(res.body.error.code).toBe('INSTRUMENT_UNSUITABLE');
  });

  it('refuses uploads once the check of the test instrument has expired', async () => {
    // A recorded check never changes (the database refuses it), so this one is recorded to expire in a few seconds.
    const validUntil = new Date(Date.now() + 4000);
    const inst = await instrumentWithCheck('valid', { validUntil });
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const testId = await startTest(operator.agent, lot.id, inst.instrumentId);
    await new Promise((r) => setTimeout(r, Math.max(0, validUntil.getTime() - Date.now() + 200)));
    const before = await writeCounts();
    const res = await uploadRequest(
      operator.agent,
      testId,
      { label: lot.containers[0].label },
      FIBRES.nylon66Samples[0],
    );
    expect(res.status).toBe(409);
    expect(res.body.error.code).toBe('INSTRUMENT_CHECK_DUE');
    expect(await writeCounts()).toEqual(before);
  });
});

describe('measurements', () => {
  it('scores an upload at once against the approved set and keeps the raw bytes and SHA-256', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 2);
    const testId = await startTest(operator.agent, lot.id, instrument.instrumentId);
    // the scanner types the label and Enter: the client sends the label as typed
    const m = await upload(
      operator.agent,
      testId,
      { label: lot.containers[0].label.toLowerCase() },
      FIBRES.nylon66Samples[0],
    );
    expect(m.verdict).toBe('pass');
    expect(m.label).toBe(lot.containers[0].label);
    // A repeat scan of the reference sample correlates near 1 (engine tests: repeat scans pass).
    expect(m.matchScore).toBeGreaterThan(0.99);
    const row = (await db()('measurement').where({ id: m.id }).first())!;
    const file = (await db()('stored_file').where({ id: row.file_id }).first())!;
    // stored byte for byte as sent (a new acquisition made from the real file, docs/provenance.md)
    const sent = lastUploadedBytes();
    expect(Buffer.compare(file.data, sent)).toBe(0);
    expect(file.sha256).toBe(sha256Hex(sent));
    expect(row).toMatchObject({ method_id: nylon.methodId, instrument_check_id: expect.any(Number), verdict: 'pass' });
    expect(JSON.parse(row.reference_ids)).toEqual(nylon.referenceIds);
    const result = JSON.parse(row.result);
    expect(result.engineVersion).toBe(row.engine_version);
    expect(result.criteria.map((c: { key: string }) => c.key)).toEqual(
      expect.arrayContaining(['correlation', 'band-concordance']),
    );
    expect(result.bands.length).toBeGreaterThan(3);
    const detail = await operator.agent.get(`/api/measurements/${m.id}`);
    expect(detail.body.method.version).toBe(1);
    expect(detail.body.references[0].id).toBe(nylon.referenceIds[0]);
    expect(detail.body.instrumentCheck.verdict).toBe('pass');
    const raw = await operator.agent.get(`/api/measurements/${m.id}/file`).buffer(true).parse(binaryBody);
    expect(Buffer.compare(raw.body as Buffer, sent)).toBe(0);
  });

  it('stores nothing for a file that cannot be read (422 with the reason)', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const testId = await startTest(operator.agent, lot.id, instrument.instrumentId);
    const before = await writeCounts();
    const bad = await operator.agent
      .post(`/api/tests/${testId}/measurements`)
      .field('label', lot.containers[0].label)
      .attach('file', Buffer.from('wavenumber,absorbance\n4000,0.1\n3999,abc\n'), {
        filename: 'broken.csv',
        contentType: 'text/csv',
      });
    expect(bad.status).toBe(422);
    expect(bad.body.error.message).toMatch(/broken\.csv/);
    expect(bad.body.error.message).toMatch(/Nothing was stored/);
    const binary = await operator.agent
      .post(`/api/tests/${testId}/measurements`)
      .field('label', lot.containers[0].label)
      .attach('file', Buffer.from([0x89, 0x50, 0x4e, 0x47, 0, 0, 0, 0, 1, 2, 3]), {
        filename: 'photo.png',
        contentType: 'image/png',
      });
    expect(binary.status).toBe(422);
    const noFile = await operator.agent
      .post(`/api/tests/${testId}/measurements`)
      .field('label', lot.containers[0].label);
    expect(noFile.status).toBe(400);
    const wrong = await uploadRequest(operator.agent, testId, { label: 'L-1999-00001-001' }, FIBRES.nylon66Samples[0]);
    expect(wrong.status).toBe(422);
    expect(await writeCounts()).toEqual(before);
  });

  it('shows a quality-gate refusal as an invalid measurement that needs a re-measurement', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const testId = await startTest(operator.agent, lot.id, instrument.instrumentId);
    const weak = await upload(operator.agent, testId, { containerId: lot.containers[0].id }, FIBRES.weakAcrylic);
    expect(weak.verdict).toBe('invalid');
    const detail = await operator.agent.get(`/api/measurements/${weak.id}`);
    expect(detail.body.result.quality.ok).toBe(false);
    expect(detail.body.result.explanation.join(' ')).toMatch(/measure|contact|pressure|crystal/i);
    const perform = await operator.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(operator.user) });
    expect(perform.status).toBe(409);
    expect(perform.body.error.code).toBe('NOT_COMPLETE');
    expect(perform.body.error.details.invalid).toEqual([lot.containers[0].label]);
    const again = await upload(operator.agent, testId, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[1]);
    expect(again.verdict).toBe('pass');
    const ok = await operator.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(operator.user) });
    expect(ok.status).toBe(200);
    expect(ok.body.status).toBe('awaiting-verification');
    // both measurements stay on record
    expect(await db()('measurement').where({ test_id: testId })).toHaveLength(2);
  });

  it('a re-measurement adds a row and leaves the earlier one unchanged', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const testId = await startTest(operator.agent, lot.id, instrument.instrumentId);
    const first = await upload(operator.agent, testId, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[0]);
    const rowBefore = await db()('measurement').where({ id: first.id }).first();
    // the container has a valid result (pass): the re-measurement needs a reason (docs/provenance.md)
    const second = await upload(
      operator.agent,
      testId,
      { containerId: lot.containers[0].id, reason: 'Sample spilled on the crystal edge; measured again.' },
      FIBRES.nylon66Samples[2],
    );
    expect(second.id).toBeGreaterThan(first.id);
    expect(await db()('measurement').where({ id: first.id }).first()).toEqual(rowBefore);
    const detail = await operator.agent.get(`/api/tests/${testId}`);
    expect(detail.body.containers[0].measurements.map((m: { id: number }) => m.id)).toEqual([first.id, second.id]);
    expect(detail.body.containers[0].latest.id).toBe(second.id);
    // the database itself refuses to change a measurement (append-only grant for the runtime account)
    await expect(untyped(db(), 'measurement').where({ id: first.id }).update({ verdict: 'fail' })).rejects.toThrow(
      /denied|append-only/i,
    );
  });

  it('keeps two uploads for the same container sent at once as separate measurements, in order', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const testId = await startTest(operator.agent, lot.id, instrument.instrumentId);
    const files = [
      FIBRES.nylon66Samples[0],
      FIBRES.nylon66Samples[1],
      FIBRES.nylon66Samples[2],
      FIBRES.nylon66Samples[0],
    ];
    const res = await Promise.all(
      files.map((f) =>
        uploadRequest(
          operator.agent,
          testId,
          { containerId: lot.containers[0].id, reason: 'Repeat scans requested by the verifier.' },
          f,
        ),
      ),
    );
    expect(res.map((r) => r.status)).toEqual([201, 201, 201, 201]);
    const rows = await db()('measurement').where({ test_id: testId }).orderBy('id');
    expect(rows).toHaveLength(4);
    expect(new Set(rows.map((r) => r.file_id)).size).toBe(4);
    for (let i = 1; i < rows.length; i++)
      expect(new Date(rows[i].created_at).getTime()).toBeGreaterThanOrEqual(new Date(rows[i - 1].created_at).getTime());
    const detail = await operator.agent.get(`/api/tests/${testId}`);
    expect(detail.body.containers[0].latest.id).toBe(rows[3].id);
  });

  it('matches several files to containers by the label in the name without storing anything', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 3);
    const other = await receiveLot(operator.agent, nylon.materialId, 1);
    const testId = await startTest(operator.agent, lot.id, instrument.instrumentId);
    const [c1, c2, c3] = lot.containers.map((c) => c.label);
    const before = await writeCounts();
    const res = await operator.agent.post(`/api/tests/${testId}/match-files`).send({
      fileNames: [
        `${c1}.csv`,
        `scan_${c2.toLowerCase()}_final.jdx`,
        `${c3}-repeat.csv`,
        `${c3}.csv`,
        'spectrum.csv',
        `${other.containers[0].label}.csv`,
        `${lot.lotNumber}-004.csv`,
        `${c1}_${c2}.csv`,
      ],
    });
    expect(res.status).toBe(200);
    expect(res.body.map((r: { status: string }) => r.status)).toEqual([
      'matched',
      'matched',
      'duplicate',
      'duplicate',
      'no-label',
      'other-lot',
      'unknown-label',
      'several-labels',
    ]);
    expect(res.body[1]).toMatchObject({ label: c2, containerId: lot.containers[1].id });
    expect(await writeCounts()).toEqual(before);
  });

  it('signs performed only when every container has a valid result, then mails the verifiers', async () => {
    const verifier = await account(['verifier']);
    const lot = await receiveLot(operator.agent, nylon.materialId, 2);
    const testId = await startTest(operator.agent, lot.id, instrument.instrumentId);
    await upload(operator.agent, testId, { containerId: lot.containers[0].id }, FIBRES.nylon66Samples[0]);
    const early = await operator.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(operator.user) });
    expect(early.status).toBe(409);
    expect(early.body.error.details.missing).toEqual([lot.containers[1].label]);
    await upload(operator.agent, testId, { containerId: lot.containers[1].id }, FIBRES.nylon66Samples[1]);
    const wrongPw = await operator.agent
      .post(`/api/tests/${testId}/perform`)
      .send({ signature: { username: operator.user.username, password: 'wrong-password-xx' } });
    expect(wrongPw.status).toBe(401);
    const ok = await operator.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(operator.user) });
    expect(ok.status).toBe(200);
    expect(ok.body.signatures.map((s: { meaning: string }) => s.meaning)).toEqual(['performed']);
    expect((await operator.agent.get(`/api/lots/${lot.id}`)).body.identityStatus).toBe('awaiting-verification');
    const mails = await db()('mail_outbox').where('subject', 'like', `%awaits verification: lot ${lot.lotNumber} %`);
    expect(mails.length).toBeGreaterThan(0);
    // one message per verifier (a long recipient list would be cut at the column's 400 characters)
    expect(mails.every((m) => !m.to_address.includes(','))).toBe(true);
    expect(mails.map((m) => m.to_address)).toContain(`${verifier.username}@test.example`);
    expect(mails.map((m) => m.to_address)).not.toContain(`${operator.user.username}@test.example`);
    // no more measurements once performed
    const late = await uploadRequest(
      operator.agent,
      testId,
      { containerId: lot.containers[0].id },
      FIBRES.nylon66Samples[2],
    );
    expect(late.status).toBe(409);
  });
});
