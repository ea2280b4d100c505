/**
 * Certificates never go missing (issue 11 items 5 and 6; issue 12 item 7): gap-free numbers from
 * a counter row under concurrency, the retry list and the background retry after a forced
 * failure, no PDF or SQL bytes in what is logged, identity not grade, and the RFC 3161 signature
 * time-stamp checked by OpenSSL and by Drumline (a tampered token is refused). Real MariaDB.
 *
 * Outside references:
 * - `openssl ts -verify` (OpenSSL 3) checks an RFC 3161 token against the data it stamps and a
 *   trusted root; `openssl cms -cmsout -print` decodes the CMS (RFC 5652) and names the unsigned
 *   attribute id-aa-signatureTimeStampToken (1.2.840.113549.1.9.16.2.14, RFC 3161 appendix A),
 *   which ETSI EN 319 142-1 requires for PAdES baseline B-T.
 * - pdftotext (poppler-utils) extracts the printed text.
 */
import { execFileSync, spawnSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';

import { loadConfig } from '../../server/lib/config';
import { extractSignatureDer, extractTimeStampToken, fakeTsaFiles, verifyPdfSignature } from '../../server/lib/signing';
import { issueCertificate, pendingCertificates, retryPendingCertificates } from '../../server/modules/certificates';
import { failureSentence } from '../../server/modules/certificates/issue';
import { createPassedLot, type PassedLot } from './fixtures-certificates';
import { agentFor, db, ownerDb, sig, testApp, untyped } from './helpers';

const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'drumline-issue-'));
afterAll(() => fs.rmSync(tmp, { recursive: true, force: true }));
const SYSTEM = { id: null, name: 'Drumline (system)' };

function writeTmp(name: string, data: Buffer | string): string {
  const f = path.join(tmp, name);
  fs.writeFileSync(f, data);
  return f;
}

const seqOf = (number: string) => Number(/^IC-\d{4}-(\d+)$/.exec(number)![1]);

async function storedPdf(lotId: number): Promise<Buffer> {
  const lot = (await db()('lot').where({ id: lotId }).first('certificate_id'))!;
  return (await db()('certificate').where({ id: lot.certificate_id! }).first('pdf'))!.pdf;
}

async function trustedRoots(): Promise<string[]> {
  return [fs.readFileSync((await fakeTsaFiles()).caCert, 'utf8')];
}

describe('numbers under concurrency', () => {
  it('ten lots verified at once get ten certificates with consecutive numbers; every reserved number is used', async () => {
    testApp();
    const lots: PassedLot[] = [];
    for (let i = 0; i < 10; i++)
      lots.push(await createPassedLot(db(), { containers: 1, stage: 'awaiting-verification' }));
    const verifiers = await Promise.all(lots.map(() => agentFor(['verifier'])));
    const before = await db()('certificate_number').max({ id: 'id' }).first();
    const answers = await Promise.all(
      lots.map((l, i) =>
        verifiers[i].agent.post(`/api/tests/${l.testId}/verify`).send({ signature: sig(verifiers[i].user) }),
      ),
    );
    for (const a of answers) {
      expect(a.status).toBe(200);
      expect(a.body).toMatchObject({ outcome: 'passed', certificate: 'issued' });
    }
    const certs = await db()('certificate').whereIn(
      'lot_id',
      lots.map((l) => l.lotId),
    );
    expect(certs).toHaveLength(10);
    const seqs = certs.map((c) => seqOf(c.number)).sort((a, b) => a - b);
    expect(new Set(certs.map((c) => c.number)).size).toBe(10);
    expect(seqs.at(-1)! - seqs[0]).toBe(9); // ten distinct numbers in a range of ten: consecutive
    // Every number reserved in this run is on a certificate (no gap), and the counter stands at the last.
    const reserved = await db()('certificate_number').where('id', '>', before?.id ?? 0);
    expect(reserved.map((r) => r.number).sort()).toEqual(certs.map((c) => c.number).sort());
    const year = Number(certs[0].number.slice(3, 7));
    expect((await db()('certificate_counter').where({ year }).first())!.last_seq).toBe(seqs.at(-1));
  });
});

describe('a forced failure and the retry', () => {
  let lot: PassedLot;
  let number: string;
  const logged: string[] = [];

  beforeAll(async () => {
    lot = await createPassedLot(db(), { containers: 2 });
    vi.spyOn(console, 'error').mockImplementation((...args: unknown[]) => {
      logged.push(args.map(String).join(' '));
    });
  });
  afterAll(() => vi.restoreAllMocks());

  it('with the signing key unreadable, the lot keeps a reserved number, the failure is recorded and QA sees it with a retry action', async () => {
    const broken = loadConfig({ signingP12Path: path.join(tmp, 'no-such-key.p12') });
    await expect(
      issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: SYSTEM }, { config: broken }),
    ).rejects.toThrow(/does not exist/);
    expect(await db()('certificate').where({ lot_id: lot.lotId })).toHaveLength(0);
    const pending = (await pendingCertificates(db())).find((p) => p.lotId === lot.lotId);
    expect(pending).toMatchObject({ failures: 1, supersedes: false });
    expect(pending!.number).toMatch(/^IC-\d{4}-\d{5}$/);
    expect(pending!.lastProblem).toMatch(/SIGNING_P12_PATH/);
    number = pending!.number!;
    const events = await db()('audit_event').where({ entity_type: 'lot', entity_id: String(lot.lotId) });
    expect(events.map((e) => e.action)).toEqual(
      expect.arrayContaining(['certificate.number-reserved', 'certificate.issue-failed']),
    );

    // A second failure keeps the same number (no second reservation, no gap).
    await expect(
      issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: SYSTEM }, { config: broken }),
    ).rejects.toThrow();
    expect(await db()('certificate_number').where({ lot_id: lot.lotId })).toHaveLength(1);

    const qa = await agentFor(['qa_manager']);
    const queue = await qa.agent.get('/api/work-queue?full=certificates-to-issue');
    const section = queue.body.sections.find((s: { key: string }) => s.key === 'certificates-to-issue');
    const item = section.items.find((i: { id: number }) => i.id === lot.lotId);
    expect(item.detail).toContain(number);
    expect(item.action).toEqual({ kind: 'issue-certificate', lotId: lot.lotId });
    expect((await qa.agent.get('/api/certificates/pending')).body.map((p: { lotId: number }) => p.lotId)).toContain(
      lot.lotId,
    );
    // Only QA reads the retry list.
    const op = await agentFor(['operator']);
    expect((await op.agent.get('/api/certificates/pending')).status).toBe(403);
  });

  it('the background retry issues it with the reserved number, and the lot leaves the list', async () => {
    const r = await retryPendingCertificates(db(), loadConfig());
    expect(r.issued).toBeGreaterThanOrEqual(1);
    const cert = (await db()('certificate').where({ lot_id: lot.lotId }).first())!;
    expect(cert.number).toBe(number);
    expect((await pendingCertificates(db())).find((p) => p.lotId === lot.lotId)).toBeUndefined();
  });

  it('a failure while storing is recorded as one sentence: never the SQL statement or the PDF bytes', async () => {
    const other = await createPassedLot(db(), { containers: 1 });
    await expect(
      issueCertificate(
        db(),
        { lotId: other.lotId, testId: other.testId, actor: SYSTEM },
        {
          testHooks: {
            beforeCommit: async (trx) => {
              // a real database error on a statement that carries the PDF bytes as a bound value
              const pdf = (await trx('certificate').where({ lot_id: other.lotId }).first('pdf'))!.pdf;
              await untyped(trx, 'certificate').insert({ id: 1, number: 'IC-0000-00000', pdf });
            },
          },
        },
      ),
    ).rejects.toBeTruthy();
    const f = (await db()('certificate_issue_failure').where({ lot_id: other.lotId }).first())!;
    expect(f.problem).toMatch(/^database error/);
    for (const text of [f.problem, ...logged]) {
      expect(text).not.toMatch(/insert into/i);
      expect(text).not.toContain('%PDF');
      expect(text).not.toMatch(/X'[0-9a-f]{40}/i);
      expect(text.length).toBeLessThan(500);
    }
    expect(failureSentence(new Error(`insert into x ${'A'.repeat(1000)}`)).length).toBeLessThanOrEqual(300);
    // QA's retry action issues it with its reserved number.
    const reserved = (await db()('certificate_number').where({ lot_id: other.lotId }).first())!;
    const qa = await agentFor(['qa_manager']);
    const res = await qa.agent.post('/api/certificates/issue').send({ lotId: other.lotId });
    expect(res.status).toBe(201);
    expect(res.body.number).toBe(reserved.number);
  });
});

describe('the database holds the numbering rules', () => {
  it('the counter only advances by one and is never deleted; reservations and failures are append-only', async () => {
    const year = (await db()('certificate_counter').first())!.year;
    for (const q of [
      () => db()('certificate_counter').where({ year }).increment('last_seq', 5),
      () => db()('certificate_counter').where({ year }).decrement('last_seq', 1),
      () => db()('certificate_counter').where({ year }).del(),
      () => untyped(db(), 'certificate_number').update({ lot_id: 1 }),
      () => db()('certificate_number').del(),
      () => untyped(db(), 'certificate_issue_failure').update({ problem: 'x' }),
    ])
      // a trigger's refusal (45000), or no DELETE grant at all for the runtime account (42000)
      await expect(q()).rejects.toMatchObject({ sqlState: expect.stringMatching(/^(45000|42000)$/) });
  });

  it('a certificate with a number not reserved for its lot is refused, even for the owner account', async () => {
    const lot = await createPassedLot(db(), { containers: 1 });
    const owner = ownerDb();
    try {
      await expect(
        owner('certificate').insert({
          number: 'IC-2099-99999',
          lot_id: lot.lotId,
          test_id: lot.testId,
          sha256: '0'.repeat(64),
          size: 1,
          pdf: Buffer.from('x'),
          signer_fingerprint: '0'.repeat(64),
          issued_at: new Date(),
        }),
      ).rejects.toMatchObject({ sqlState: '45000' });
    } finally {
      await owner.destroy();
    }
  });
});

describe('identity, not grade, and the signature time-stamp', () => {
  let lot: PassedLot;
  let pdf: Buffer;

  beforeAll(async () => {
    lot = await createPassedLot(db(), { containers: 1 });
    await db()('material')
      .where({ id: lot.materialId })
      .update({ grade: 'Ph. Eur. 99.5 %', monograph_ref: 'Ph. Eur. 0000' });
    await issueCertificate(db(), { lotId: lot.lotId, testId: lot.testId, actor: SYSTEM });
    pdf = await storedPdf(lot.lotId);
  });

  it('prints the grade and monograph "as labelled" and says the test confirms identity only (pdftotext)', () => {
    const text = execFileSync('pdftotext', [writeTmp('grade.pdf', pdf), '-'], { encoding: 'utf8' }).replace(
      /\s+/g,
      ' ',
    );
    expect(text).toContain('Ph. Eur. 99.5 % (as labelled)');
    expect(text).toContain('Ph. Eur. 0000 (as labelled)');
    expect(text).toMatch(/confirms the identity of the substance only/);
    expect(text).toMatch(/not confirmed by the infrared test/);
  });

  it('the CMS carries id-aa-signatureTimeStampToken and openssl ts -verify accepts the token over the signature value', async () => {
    const printed = execFileSync(
      'openssl',
      ['cms', '-cmsout', '-print', '-inform', 'DER', '-in', writeTmp('ts.p7s', extractSignatureDer(pdf)!)],
      { encoding: 'utf8' },
    );
    expect(printed).toMatch(/unsignedAttrs:[\s\S]*1\.2\.840\.113549\.1\.9\.16\.2\.14|id-smime-aa-timeStampToken/);
    const { token, signatureValue } = extractTimeStampToken(pdf)!;
    const out = spawnSync(
      'openssl',
      [
        'ts', '-verify', '-in', writeTmp('token.der', token), '-token_in',
        '-data', writeTmp('sigvalue.bin', signatureValue), '-CAfile', (await fakeTsaFiles()).caCert,
      ], // prettier-ignore
      { encoding: 'utf8' },
    );
    expect(`${out.stdout}${out.stderr}`).toContain('Verification: OK');
    // ... and refuses it over other bytes
    const wrong = spawnSync(
      'openssl',
      [
        'ts', '-verify', '-in', writeTmp('token.der', token), '-token_in',
        '-data', writeTmp('other.bin', Buffer.from('other bytes')), '-CAfile', (await fakeTsaFiles()).caCert,
      ], // prettier-ignore
      { encoding: 'utf8' },
    );
    expect(`${wrong.stdout}${wrong.stderr}`).toContain('Verification: FAILED');
  });

  it("Drumline's verification shows the time-stamp; the upload check says authentic with the stamped time", async () => {
    const v = verifyPdfSignature(pdf, { tsaTrustedPem: await trustedRoots() });
    expect(v.valid).toBe(true);
    expect(v.timeStamp).toMatchObject({ present: true, valid: true });
    expect(Math.abs(new Date(v.timeStamp!.time!).getTime() - Date.now())).toBeLessThan(10 * 60_000);
    expect(v.timeStamp!.authority).toMatch(/time-stamping authority/);
    const { agent } = await agentFor(['auditor']);
    const r = await agent.post('/api/certificates/verify').attach('file', pdf, 'c.pdf');
    expect(r.body.verdict).toBe('authentic');
    expect(r.body.summary).toMatch(/time-stamped/);
    // Untrusted authority: the same token does not verify without the site's trust roots.
    expect(verifyPdfSignature(pdf, { tsaTrustedPem: [] }).valid).toBe(false);
  });

  it('a tampered time-stamp token (one digit of its time) makes the verification fail, in the API too', async () => {
    const { token } = extractTimeStampToken(pdf)!;
    const hex = token.toString('hex');
    const at = pdf.indexOf(Buffer.from(hex, 'latin1'));
    expect(at).toBeGreaterThan(0);
    // GeneralizedTime: tag 0x18, length 0x0f, "YYYYMMDDhhmmssZ"; change the last seconds digit.
    const t = token.indexOf(Buffer.from([0x18, 0x0f]));
    const altered = Buffer.from(token);
    const digit = t + 2 + 13;
    altered[digit] = altered[digit] === 0x30 ? 0x31 : 0x30;
    const tampered = Buffer.from(pdf);
    tampered.write(altered.toString('hex'), at, 'latin1');
    const v = verifyPdfSignature(tampered, { tsaTrustedPem: await trustedRoots() });
    expect(v.valid).toBe(false);
    expect(v.timeStamp).toMatchObject({ present: true, valid: false });
    expect(v.problem).toMatch(/time-stamp does not verify: the time-stamp token was altered/);
    const { agent } = await agentFor(['auditor']);
    const r = await agent.post('/api/certificates/verify').attach('file', tampered, 'c.pdf');
    expect(r.body.verdict).toBe('not authentic');
    expect(r.body.reasons.join(' ')).toMatch(/time-stamp/);
  });
});

describe('the background retry runs under a lease', () => {
  it('issues a passed lot that never got a number (process stopped after verification)', async () => {
    const lot = await createPassedLot(db(), { containers: 1 });
    expect((await pendingCertificates(db())).find((p) => p.lotId === lot.lotId)).toMatchObject({ number: null });
    const { startCertificateRetryJob } = await import('../../server/modules/certificates');
    const job = startCertificateRetryJob(db(), loadConfig({ certificateRetryMinutes: 60 }))!;
    try {
      expect(await job.tick()).toBe(true);
    } finally {
      await job.stop();
    }
    const lease = (await db()('job_lease').where({ name: 'certificate-retry' }).first())!;
    expect(lease.last_error).toBeNull();
    expect((await db()('lot').where({ id: lot.lotId }).first())!.certificate_id).not.toBeNull();
  });
});
