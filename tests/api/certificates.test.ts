/**
 * Identity certificates (issue 6): content, digital signature checked by outside tools
 * (poppler's pdfsig, OpenSSL's cms), tamper detection, atomic storage, superseding, download,
 * verification and audit. Runs against the real MariaDB test database.
 *
 * Outside references:
 * - pdfsig (poppler-utils) validates PDF signatures independently of our code; it exits 0 even
 *   on a digest mismatch, so the text "Signature is Valid." is asserted.
 * - OpenSSL `cms -cmsout -print` decodes the CMS structure (RFC 5652); the ESS
 *   signing-certificate-v2 attribute is RFC 5035 (OID 1.2.840.113549.1.9.16.2.47), required by
 *   ETSI EN 319 142-1 for PAdES baseline B-B. `openssl cms -verify` re-checks the RSA signature.
 * - pdftotext (poppler-utils) extracts the printed text.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import request from 'supertest';
import { sha256Hex } from '../../server/lib/canonical';
import { extractSignatureDer, KEYS_DIR, verifyPdfSignature } from '../../server/lib/signing';
import { issueCertificate } from '../../server/modules/certificates';
import { createPassedLot, type PassedLot } from './fixtures-certificates';
import { agentFor, db, ownerDb, sig, testApp, untyped } from './helpers';

const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'drumline-cert-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));

function writeTmp(name: string, data: Buffer): string {
  const f = path.join(tmp, name);
  fs.writeFileSync(f, data);
  return f;
}

function pdfsig(file: string): string {
  const r = spawnSync('pdfsig', [file], { encoding: 'utf8' });
  return `${r.stdout}\n${r.stderr}`;
}

function pdftotext(file: string): string {
  return execFileSync('pdftotext', [file, '-'], { encoding: 'utf8' });
}

/** Signed content per /ByteRange, for openssl's detached verification. */
function signedRanges(pdf: Buffer): Buffer {
  const all = [...pdf.toString('latin1').matchAll(/\/ByteRange\s*\[\s*(\d+)\s+(\d+)\s+(\d+)\s+(\d+)\s*\]/g)];
  const [a, b, c, d] = all.at(-1)!.slice(1, 5).map(Number);
  return Buffer.concat([pdf.subarray(a, a + b), pdf.subarray(c, c + d)]);
}

function binary(res: request.Response, cb: (err: Error | null, body: Buffer) => void) {
  const chunks: Buffer[] = [];
  res.on('data', (c: Buffer) => chunks.push(c));
  res.on('end', () => cb(null, Buffer.concat(chunks)));
}

async function storedPdf(id: number): Promise<Buffer> {
  const r = (await db()('certificate').where({ id }).select('pdf').first())!;
  return r.pdf;
}

const SYSTEM = { id: null, name: 'Drumline (system)' };

describe('issuing a certificate for a passed lot', () => {
  let lot: PassedLot;
  let certId: number;
  let pdf: Buffer;
  let file: string;

  beforeAll(async () => {
    lot = await createPassedLot(db(), { containers: 4 });
    const meta = await issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: SYSTEM });
    expect(meta.created).toBe(true);
    certId = meta.id;
    pdf = await storedPdf(certId);
    file = writeTmp('certificate.pdf', pdf);
  });

  it('stores the signed bytes with their SHA-256 and records the certificate against the lot', async () => {
    const row = (await db()('certificate').where({ id: certId }).first())!;
    expect(row.number).toMatch(/^IC-\d{4}-\d{5}$/);
    expect(row.sha256).toBe(sha256Hex(pdf));
    expect(row.size).toBe(pdf.length);
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
    const l = (await db()('lot').where({ id: lot.lotId }).first())!;
    expect(l.certificate_id).toBe(certId);
    const audit = await db()('audit_event').where({
      action: 'certificate.issued',
      entity_type: 'certificate',
      entity_id: String(certId),
    });
    expect(audit).toHaveLength(1);
    expect(JSON.parse(audit[0].after_json!)).toMatchObject({
      number: row.number,
      sha256: row.sha256,
      lotNumber: lot.lotNumber,
    });
  });

  it('does not issue a second certificate for the same lot (returns the existing one)', async () => {
    const again = await issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: SYSTEM });
    expect(again.created).toBe(false);
    expect(again.id).toBe(certId);
    expect(await db()('certificate').where({ lot_id: lot.lotId }).count({ n: '*' })).toEqual([{ n: 1 }]);
  });

  it('pdfsig reports "Signature is Valid." with the ETSI.CAdES.detached subfilter over the whole document', () => {
    const out = pdfsig(file);
    expect(out).toContain('Signature is Valid.');
    expect(out).toContain('ETSI.CAdES.detached');
    expect(out).toContain('Total document signed');
    expect(out).toContain('identity certificates'); // signer common name "<site> identity certificates"
  });

  it('openssl shows the ESS signing-certificate-v2 attribute with the SHA-256 of the signer certificate, and verifies the signature', async () => {
    const der = extractSignatureDer(pdf)!;
    const p7s = writeTmp('sig.p7s', der);
    const printed = execFileSync('openssl', ['cms', '-cmsout', '-print', '-inform', 'DER', '-in', p7s], {
      encoding: 'utf8',
    });
    expect(printed).toMatch(/signingCertificateV2 \(1\.2\.840\.113549\.1\.9\.16\.2\.47\)/);
    expect(printed).toMatch(/contentType \(1\.2\.840\.113549\.1\.9\.3\)/);
    expect(printed).toMatch(/signingTime \(1\.2\.840\.113549\.1\.9\.5\)/);
    expect(printed).toMatch(/messageDigest \(1\.2\.840\.113549\.1\.9\.4\)/);
    const row = (await db()('certificate').where({ id: certId }).first())!;
    // The attribute's certHash is the signer certificate fingerprint recorded with the certificate.
    expect(printed.replace(/\s/g, '')).toContain(row.signer_fingerprint.toUpperCase());
    const content = writeTmp('signed-ranges.bin', signedRanges(pdf));
    const v = spawnSync(
      'openssl',
      [
        'cms',
        '-verify',
        '-inform',
        'DER',
        '-in',
        p7s,
        '-binary',
        '-noverify',
        '-content',
        content,
        '-out',
        path.join(tmp, 'out.bin'),
      ],
      { encoding: 'utf8' },
    );
    expect(v.stderr).toContain('Verification successful');
  });

  it('prints lot, every container, results, signers with meanings, and "Page 1 of"', async () => {
    const text = pdftotext(file);
    const flat = text.replace(/\s+/g, ' ');
    expect(flat).toContain(lot.lotNumber);
    for (const c of lot.containers) {
      expect(flat).toContain(c.label);
      // the 64 hex digits are printed in two lines of 32
      expect(flat).toContain(c.fileSha256.slice(0, 32));
      expect(flat).toContain(c.fileSha256.slice(32));
      expect(text).toMatch(new RegExp(`\\b${c.measurementId}\\b`));
    }
    expect(flat).toContain(lot.operator.fullName);
    expect(flat).toContain(lot.verifier.fullName);
    expect(flat).toContain(lot.qa.fullName); // reference and method approvals
    expect(flat).toMatch(/Performed/);
    expect(flat).toMatch(/Verified/);
    expect(flat).toContain('Page 1 of');
    expect(flat).toContain(lot.referenceCode);
    expect(flat).toContain('release remains the responsibility of the authorised person');
    expect(flat).toMatch(/Europe\/Berlin \(GMT[+-]\d+/); // date and time with the zone named
    expect(flat).toContain('/certificates/verify?number=IC-');
    // the correlation coefficient to 4 decimals, under its one name (issue 18 item 4), band concordance as "n of m"
    const row = (await db()('measurement').where({ id: lot.containers[0].measurementId }).first())!;
    expect(flat).toContain(Number(row.match_score).toFixed(4));
    expect(text.replace(/\s+/g, '')).toContain('Correlationcoefficient(r)');
    expect(flat).not.toMatch(/match score/i);
    expect(flat).toMatch(/\d+ of \d+/);
  });

  it('carries a QR code and a vector figure', () => {
    // The spectrum figure is vector paths (no raster image of it), the QR code is drawn as rectangles.
    const images = execFileSync('pdfimages', ['-list', file], { encoding: 'utf8' }).trim().split('\n').slice(2);
    expect(images).toHaveLength(0);
    const info = execFileSync('pdfinfo', [file], { encoding: 'utf8' });
    expect(info).toMatch(/Pages:\s+[12]/);
  });

  it('our own verifier agrees with pdfsig on the intact file', () => {
    const v = verifyPdfSignature(pdf, {
      tsaTrustedPem: [fs.readFileSync(path.join(KEYS_DIR, 'fake-tsa', 'root.crt'), 'utf8')],
    });
    expect(v).toMatchObject({
      signed: true,
      valid: true,
      coversWholeFile: true,
      hasSigningCertificateV2: true,
      subFilter: 'ETSI.CAdES.detached',
    });
  });

  describe('one byte changed inside the signed range', () => {
    let tampered: Buffer;
    beforeAll(() => {
      tampered = Buffer.from(pdf);
      // Change one character of the document title in the Info dictionary (first signed range).
      const at = tampered.indexOf('Identity certificate IC-');
      expect(at).toBeGreaterThan(0);
      const [, b] = [...tampered.toString('latin1').matchAll(/\/ByteRange\s*\[\s*(\d+)\s+(\d+)/g)]
        .at(-1)!
        .slice(1)
        .map(Number);
      expect(at).toBeLessThan(b);
      tampered[at] = 'i'.charCodeAt(0);
    });

    it('pdfsig no longer says valid', () => {
      const out = pdfsig(writeTmp('tampered.pdf', tampered));
      expect(out).not.toContain('Signature is Valid.');
      expect(out).toMatch(/Digest Mismatch|Invalid/);
    });

    it('Drumline says "not authentic" (not byte-identical, signature invalid) and names the certificate', async () => {
      const { agent } = await agentFor(['auditor']);
      const res = await agent.post('/api/certificates/verify').attach('file', tampered, 'tampered.pdf');
      expect(res.status).toBe(200);
      expect(res.body.verdict).toBe('not authentic');
      expect(res.body.summary).toMatch(/^Not authentic/);
      expect(res.body.byteIdentical).toBe(false);
      expect(res.body.signature.valid).toBe(false);
      expect(res.body.signature.problem).toMatch(/changed after signing/);
      expect(res.body.certificate.id).toBe(certId);
      expect(res.body.lot.lotNumber).toBe(lot.lotNumber);
    });
  });

  it('accepts the intact file by upload: byte-identical, signature valid, lot named; audited', async () => {
    const { agent, user } = await agentFor(['auditor']);
    const res = await agent.post('/api/certificates/verify').attach('file', pdf, 'certificate.pdf');
    expect(res.status).toBe(200);
    expect(res.body).toMatchObject({
      verdict: 'authentic',
      byteIdentical: true,
      signedBySite: true,
      checkedBy: 'upload',
    });
    expect(res.body.signature.valid).toBe(true);
    expect(res.body.lot).toMatchObject({ id: lot.lotId, lotNumber: lot.lotNumber });
    const a = await db()('audit_event').where({ action: 'certificate.verified', actor_id: user.id });
    expect(a).toHaveLength(1);
    expect(JSON.parse(a[0].after_json!)).toMatchObject({ verdict: 'authentic', byteIdentical: true });
  });

  it('verifies by number (stored bytes against the recorded hash) and says so for an unknown number', async () => {
    const { agent } = await agentFor(['operator']);
    const row = (await db()('certificate').where({ id: certId }).first())!;
    const ok = await agent.get('/api/certificates/verify').query({ number: row.number });
    expect(ok.status).toBe(200);
    expect(ok.body).toMatchObject({ verdict: 'authentic', byteIdentical: true, checkedBy: 'number' });
    const unknown = await agent.get('/api/certificates/verify').query({ number: 'IC-1999-99999' });
    expect(unknown.status).toBe(200);
    expect(unknown.body.verdict).toBe('not authentic');
    expect(unknown.body.certificate).toBeNull();
    const bad = await agent.get('/api/certificates/verify').query({ number: 'hello' });
    expect(bad.status).toBe(400);
  });

  it('refuses a file that is not a PDF and a request without a file; needs a session', async () => {
    const { agent } = await agentFor(['verifier']);
    const notPdf = await agent.post('/api/certificates/verify').attach('file', Buffer.from('just text'), 'x.pdf');
    expect(notPdf.status).toBe(422);
    expect(notPdf.body.error.code).toBe('NOT_A_PDF');
    const none = await agent.post('/api/certificates/verify');
    expect(none.status).toBe(400);
    const anon = await request(testApp()).post('/api/certificates/verify').attach('file', pdf, 'c.pdf');
    expect(anon.status).toBe(401);
  });

  it('downloads exactly the stored bytes, audited', async () => {
    const { agent, user } = await agentFor(['auditor']);
    const res = await agent.get(`/api/certificates/${certId}/pdf`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    expect(res.headers['content-disposition']).toMatch(/attachment; filename="IC-\d{4}-\d{5}\.pdf"/);
    expect(Buffer.compare(res.body as Buffer, pdf)).toBe(0);
    const a = await db()('audit_event').where({
      action: 'certificate.downloaded',
      actor_id: user.id,
      entity_id: String(certId),
    });
    expect(a).toHaveLength(1);
  });

  it('lists and searches by lot, material and date; shows metadata with content', async () => {
    const { agent } = await agentFor(['operator']);
    const byLot = await agent.get('/api/certificates').query({ lot: lot.lotNumber });
    expect(byLot.status).toBe(200);
    expect(byLot.body.items.map((c: { id: number }) => c.id)).toEqual([certId]);
    const byMaterial = await agent.get('/api/certificates').query({ material: lot.materialCode });
    expect(byMaterial.body.items.map((c: { id: number }) => c.id)).toEqual([certId]);
    const today = new Date().toISOString().slice(0, 10);
    const byDate = await agent.get('/api/certificates').query({ lot: lot.lotNumber, from: today, to: today });
    expect(byDate.body.total).toBe(1);
    const before = await agent.get('/api/certificates').query({ lot: lot.lotNumber, to: '2000-01-01' });
    expect(before.body.total).toBe(0);
    const byLotId = await agent.get('/api/certificates').query({ lotId: lot.lotId });
    expect(byLotId.body.items[0]).toMatchObject({
      id: certId,
      lotNumber: lot.lotNumber,
      current: true,
      supersedes: null,
    });
    const meta = await agent.get(`/api/certificates/${certId}`);
    expect(meta.status).toBe(200);
    expect(meta.body.content.containers).toHaveLength(4);
    expect(meta.body.content.lot.lotNumber).toBe(lot.lotNumber);
    expect((await agent.get('/api/certificates/999999')).status).toBe(404);
  });

  it('shows the signing identity to administrators only', async () => {
    const { agent: admin } = await agentFor(['admin']);
    const res = await admin.get('/api/certificates/signing-identity');
    expect(res.status).toBe(200);
    const row = (await db()('certificate').where({ id: certId }).first())!;
    expect(res.body.fingerprint).toBe(row.signer_fingerprint);
    expect(res.body.subject).toMatch(/identity certificates/);
    expect(new Date(res.body.notAfter).getTime()).toBeGreaterThan(Date.now());
    const { agent: op } = await agentFor(['operator']);
    expect((await op.get('/api/certificates/signing-identity')).status).toBe(403);
  });

  it('the database refuses to change or delete a stored certificate, even for the owner account', async () => {
    const owner = ownerDb();
    try {
      await expect(
        untyped(owner, 'certificate')
          .where({ id: certId })
          .update({ sha256: 'x'.repeat(64) }),
      ).rejects.toThrow(/append-only/);
      await expect(owner('certificate').where({ id: certId }).delete()).rejects.toThrow(/append-only/);
    } finally {
      await owner.destroy();
    }
    await expect(untyped(db(), 'certificate').where({ id: certId }).update({ size: 1 })).rejects.toThrow(/denied/);
  });
});

describe('atomic issuing', () => {
  it('a failure while storing leaves neither a certificate row nor a changed lot', async () => {
    const lot = await createPassedLot(db(), { containers: 2 });
    const before = await db()('lot').where({ id: lot.lotId }).first();
    const auditBefore = await db()('audit_event').max({ id: 'id' }).first();
    await expect(
      issueCertificate(
        db(),
        { lotId: lot.lotId, testId: lot.testId, actor: SYSTEM },
        {
          testHooks: {
            // A real database error inside the storing transaction, after the certificate row and
            // the lot pointer were written: a container label that already exists.
            beforeCommit: async (trx) => {
              await trx('container').insert({ lot_id: lot.lotId, seq: 99, label: lot.containers[0].label });
            },
          },
        },
      ),
    ).rejects.toMatchObject({ code: 'ER_DUP_ENTRY' });
    expect(await db()('certificate').where({ lot_id: lot.lotId })).toHaveLength(0);
    const after = (await db()('lot').where({ id: lot.lotId }).first())!;
    expect(after).toEqual(before);
    expect(after.certificate_id).toBeNull();
    const auditAfter = await db()('audit_event')
      .where('id', '>', auditBefore?.id ?? 0)
      .whereIn('action', ['certificate.issued', 'lot.certificate-recorded']);
    expect(auditAfter).toHaveLength(0);

    // Nothing half-stored blocks the next attempt.
    const ok = await issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: SYSTEM });
    expect(ok.created).toBe(true);
    expect((await db()('lot').where({ id: lot.lotId }).first())!.certificate_id).toBe(ok.id);
  });

  it('concurrent issuing: two lots get distinct numbers; the same lot twice gets one certificate', async () => {
    const [a, b] = [await createPassedLot(db(), { containers: 1 }), await createPassedLot(db(), { containers: 1 })];
    const [ca, cb] = await Promise.all(
      [a, b].map((l) => issueCertificate(db(), { lotId: l.lotId, testId: l.testId, actor: SYSTEM })),
    );
    expect(ca.created && cb.created).toBe(true);
    expect(ca.number).not.toBe(cb.number);

    const c = await createPassedLot(db(), { containers: 1 });
    const both = await Promise.all(
      [1, 2].map(() => issueCertificate(db(), { lotId: c.lotId, testId: c.testId, actor: SYSTEM })),
    );
    expect(both.filter((x) => x.created)).toHaveLength(1);
    expect(both[0].id).toBe(both[1].id);
    expect(await db()('certificate').where({ lot_id: c.lotId })).toHaveLength(1);
  });

  it('refuses a lot that has not passed, storing nothing', async () => {
    // (a passed lot cannot go back in the database; this one stops before verification)
    const lot = await createPassedLot(db(), { containers: 1, stage: 'awaiting-verification' });
    await expect(issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: SYSTEM })).rejects.toMatchObject(
      { status: 409 },
    );
    expect(await db()('certificate').where({ lot_id: lot.lotId })).toHaveLength(0);
  });

  it('refuses a lot where a container did not pass', async () => {
    const lot = await createPassedLot(db(), { containers: 2 });
    // A later failing re-measurement of container 2 in the same (verified) attempt counts.
    const m = (await db()('measurement').where({ id: lot.containers[1].measurementId }).first())!;
    const { id: _id, ...rest } = m;
    await db()('measurement').insert({ ...rest, verdict: 'fail', created_at: new Date() });
    await expect(issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: SYSTEM })).rejects.toThrow(
      /did not pass/,
    );
    expect(await db()('certificate').where({ lot_id: lot.lotId })).toHaveLength(0);
  });
});

describe('superseding', () => {
  it('QA issues a new certificate referencing the old one with reason and e-signature; both stay readable', async () => {
    const lot = await createPassedLot(db(), { containers: 2 });
    const first = await issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: SYSTEM });
    const oldPdf = await storedPdf(first.id);

    const { agent: op } = await agentFor(['operator']);
    expect(
      (
        await op
          .post(`/api/certificates/${first.id}/supersede`)
          .send({ reason: 'Supplier name corrected on the lot record', signature: { password: 'x' } })
      ).status,
    ).toBe(403);

    const { agent: qa, user } = await agentFor(['qa_manager']);
    const wrong = await qa.post(`/api/certificates/${first.id}/supersede`).send({
      reason: 'Supplier name corrected on the lot record',
      signature: { username: user.username, password: 'wrong-password-123' },
    });
    expect(wrong.status).toBe(401);
    expect(await db()('certificate').where({ lot_id: lot.lotId })).toHaveLength(1);

    const res = await qa
      .post(`/api/certificates/${first.id}/supersede`)
      .send({ reason: 'Supplier name corrected on the lot record', signature: sig(user) });
    expect(res.status).toBe(201);
    expect(res.body.supersedes).toEqual({ id: first.id, number: first.number });
    expect(res.body.number).not.toBe(first.number);

    const rows = await db()('certificate').where({ lot_id: lot.lotId }).orderBy('id');
    expect(rows).toHaveLength(2);
    expect(rows[1].supersedes_id).toBe(first.id);
    expect(rows[1].supersede_reason).toBe('Supplier name corrected on the lot record');
    const s = await db()('e_signature').where({ id: rows[1].supersede_signature_id! }).first();
    expect(s).toMatchObject({
      meaning: 'issued',
      printed_name: user.fullName,
      entity_type: 'certificate',
      entity_id: res.body.number,
    });
    expect((await db()('lot').where({ id: lot.lotId }).first())!.certificate_id).toBe(rows[1].id);

    // Old bytes are unchanged and still verify; the new one prints what it supersedes.
    expect(Buffer.compare(await storedPdf(first.id), oldPdf)).toBe(0);
    const oldMeta = await qa.get(`/api/certificates/${first.id}`);
    expect(oldMeta.body).toMatchObject({ current: false, supersededBy: { id: rows[1].id, number: res.body.number } });
    const newText = pdftotext(writeTmp('superseding.pdf', rows[1].pdf)).replace(/\s+/g, ' ');
    expect(newText).toContain(`Supersedes certificate ${first.number}`);
    expect(newText).toContain('Supplier name corrected on the lot record');
    expect(pdfsig(writeTmp('superseding2.pdf', rows[1].pdf))).toContain('Signature is Valid.');
    const check = await qa.post('/api/certificates/verify').attach('file', oldPdf, 'old.pdf');
    expect(check.body.byteIdentical).toBe(true);
    expect(check.body.reasons.join(' ')).toContain(`superseded by ${res.body.number}`);

    // Only the current certificate can be superseded.
    const again = await qa
      .post(`/api/certificates/${first.id}/supersede`)
      .send({ reason: 'Second attempt on the old one', signature: { password: user.password } });
    expect(again.status).toBe(409);
    const audit = await db()('audit_event').where({ action: 'certificate.superseded', entity_id: String(first.id) });
    expect(audit).toHaveLength(1);
  });
});
