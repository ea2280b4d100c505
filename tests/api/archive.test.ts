/**
 * Archives in open formats (issue 13 item 6): a passed lot (real fibre spectra from
 * ../shared/reference-data, measured, performed, verified, certificate issued) is exported as one
 * zip; the test opens it with yauzl and rebuilds the lot's facts from the archive alone: every
 * file against the manifest's SHA-256, each raw file against the hash its audit event recorded,
 * verdicts and scores from the audit events, the certificate's signature, each event's own hash
 * (server/lib/audit.ts rowHash, with the audit-chain key), the JCAMP-DX copies read back by Drumline's reader and by
 * jcampconverter 10.0.2 (test reference). The rebuilt facts equal the database's. Refused: roles
 * the route does not name, a lot that does not exist.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import yauzl from 'yauzl';
import type { Response as AgentResponse } from 'superagent';
import { convert } from 'jcampconverter';
import { createHash } from 'node:crypto';
import { chainState, isKeyed, rowHash, type AuditRow } from '../../server/lib/audit';
import { auditKey } from '../../server/lib/audit-key';
import { verifyPdfSignature } from '../../server/lib/signing';
import { trustedTsaRoots } from '../../server/modules/certificates/config';
import { readSpectrum } from '../../server/spectra';
import type { ArchiveManifest, LotFacts } from '../../server/modules/archive/contract';
import type { ContainerRow, MeasurementRow, StoredFileRow } from '../../server/lib/db-tables';
import { db, sig } from './helpers';
import {
  agent,
  approvedMaterial,
  FIBRES,
  flushMail,
  instrumentWithCheck,
  receiveLot,
  retire,
  startTest,
  upload,
} from './fixtures-testing';

type Signed = Awaited<ReturnType<typeof agent>>;
const sha = (b: Buffer) => createHash('sha256').update(b).digest('hex');

function unzip(buf: Buffer): Promise<Map<string, Buffer>> {
  return new Promise((resolve, reject) => {
    yauzl.fromBuffer(buf, { lazyEntries: true }, (err, zip) => {
      if (err || !zip) return reject(err);
      const out = new Map<string, Buffer>();
      zip.on('entry', (e: yauzl.Entry) => {
        zip.openReadStream(e, (err2, s) => {
          if (err2 || !s) return reject(err2);
          const chunks: Buffer[] = [];
          s.on('data', (c: Buffer) => chunks.push(c));
          s.on('end', () => {
            out.set(e.fileName, Buffer.concat(chunks));
            zip.readEntry();
          });
        });
      });
      zip.on('end', () => resolve(out));
      zip.readEntry();
    });
  });
}

const binary = (res: AgentResponse, cb: (e: Error | null, b: Buffer) => void) => {
  const chunks: Buffer[] = [];
  const stream = res as unknown as NodeJS.ReadableStream;
  stream.on('data', (c: Buffer) => chunks.push(c));
  stream.on('end', () => cb(null, Buffer.concat(chunks)));
};

let olga: Signed;
let victor: Signed;
let qa: Signed;
let lotId: number;
let lotNumber: string;

beforeAll(async () => {
  const nylon = await approvedMaterial({ name: 'Nylon 6,6 yarn', referenceFiles: [FIBRES.nylon66Reference] });
  const { instrumentId } = await instrumentWithCheck('valid');
  olga = await agent(['operator']);
  victor = await agent(['verifier']);
  qa = await agent(['qa_manager']);
  const files = FIBRES.nylon66Samples.slice(0, 2);
  const lot = await receiveLot(olga.agent, nylon.materialId, files.length);
  const testId = await startTest(olga.agent, lot.id, instrumentId);
  for (const [i, f] of files.entries()) await upload(olga.agent, testId, { containerId: lot.containers[i].id }, f);
  expect((await olga.agent.post(`/api/tests/${testId}/perform`).send({ signature: sig(olga.user) })).status).toBe(200);
  expect((await victor.agent.post(`/api/tests/${testId}/verify`).send({ signature: sig(victor.user) })).status).toBe(
    200,
  );
  lotId = lot.id;
  lotNumber = lot.lotNumber;
  expect((await db()('lot').where({ id: lotId }).first())!.certificate_id).not.toBeNull();
}, 120_000);

afterAll(async () => {
  await flushMail();
  await retire();
});

describe('lot archive', () => {
  it('refuses operators and verifiers (403) and a lot that does not exist (404)', async () => {
    expect((await olga.agent.get(`/api/lots/${lotId}/archive`)).status).toBe(403);
    expect((await victor.agent.get(`/api/lots/${lotId}/archive`)).status).toBe(403);
    expect((await qa.agent.get('/api/lots/999999999/archive')).status).toBe(404);
  });

  it('rebuilds the lot’s facts from the archive alone, and they equal the database’s', async () => {
    const res = await qa.agent.get(`/api/lots/${lotId}/archive`).buffer(true).parse(binary);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/zip');
    const entries = await unzip(res.body as Buffer);
    const root = [...entries.keys()][0].split('/')[0] + '/';
    const file = (n: string) => entries.get(root + n)!;

    // 1. Every file is listed in the manifest with its SHA-256, and nothing else is in the zip.
    const manifest = JSON.parse(file('manifest.json').toString()) as ArchiveManifest;
    expect(res.headers['x-manifest-sha256']).toBe(sha(file('manifest.json')));
    expect(manifest.lotNumber).toBe(lotNumber);
    expect([...entries.keys()].sort()).toEqual(
      [...manifest.files.map((f) => root + f.name), root + 'manifest.json'].sort(),
    );
    for (const f of manifest.files) expect(sha(file(f.name)), f.name).toBe(f.sha256);

    // 2. The audit events: each one's own hash holds; the lot's story is in them.
    const events = JSON.parse(file('audit/events.json').toString()) as (AuditRow & {
      after: Record<string, unknown>;
    })[];
    // Each event's hash is an HMAC with the audit-chain key (kept apart from the archive, as from the backups).
    const { keyedFrom } = await chainState(db());
    const key = auditKey().key;
    for (const e of events)
      expect(
        rowHash({ ...e, occurred_at: new Date(e.occurred_at) }, isKeyed(Number(e.id), keyedFrom) ? key : null),
        `event ${e.id}`,
      ).toBe(e.hash);
    const csv = file('audit/events.csv').toString();
    expect(csv.trim().split('\n')).toHaveLength(events.length + 1);
    const received = events.find((e) => e.action === 'lot.received')!;
    const measured = events.filter((e) => e.action === 'measurement.recorded');
    const issued = events.find((e) => e.action === 'certificate.issued')!;
    const verifiedSig = events.find((e) => e.entity_type === 'identity_test' && /verif/.test(e.action));
    expect(received && issued && verifiedSig).toBeTruthy();

    // 3. Raw files hash to what their events recorded, and read as spectra; the JCAMP-DX copies
    //    read back to the same spectrum in both readers.
    const rawNames = [...entries.keys()].filter((k) => k.startsWith(root + 'raw/'));
    expect(rawNames).toHaveLength(measured.length);
    const rebuiltMeasurements = measured
      .map((e) => {
        const a = e.after as {
          file: { sha256: string; name: string };
          verdict: string;
          matchScore: number;
          container: string;
        };
        const raw = rawNames.find((n) => n.startsWith(`${root}raw/${e.entity_id}-`))!;
        const bytes = entries.get(raw)!;
        expect(sha(bytes)).toBe(a.file.sha256);
        const s = readSpectrum(bytes, a.file.name);
        const jdx = [...entries.keys()].find(
          (k) => k.startsWith(`${root}jcamp/${e.entity_id}-`) && k.endsWith('.jdx'),
        )!;
        const text = entries.get(jdx)!.toString();
        const back = readSpectrum(text, 'copy.jdx');
        const ref = convert(text).flatten[0].spectra[0].data as { x: number[]; y: number[] };
        for (let i = 0; i < s.y.length; i++) {
          expect(Math.abs(back.y[i] - s.y[i])).toBeLessThanOrEqual(1e-12 * Math.abs(s.y[i]));
          expect(Math.abs(ref.y[i] - s.y[i])).toBeLessThanOrEqual(1e-12 * Math.abs(s.y[i]));
        }
        return {
          id: Number(e.entity_id),
          container: a.container,
          verdict: a.verdict,
          matchScore: a.matchScore,
          rawSha256: a.file.sha256,
        };
      })
      .sort((x, y) => x.id - y.id);

    // 4. The certificate PDF: its hash as issued, a valid signature.
    const cert = issued.after as { number: string; sha256: string };
    const pdf = file(`certificates/${cert.number}.pdf`);
    expect(sha(pdf)).toBe(cert.sha256);
    expect(verifyPdfSignature(pdf, { tsaTrustedPem: trustedTsaRoots() }).valid).toBe(true);
    expect(
      file(`review/${manifest.files.find((f) => f.name.startsWith('review/'))!.name.slice(7)}`)
        .subarray(0, 5)
        .toString(),
    ).toBe('%PDF-');

    // 5. The rebuilt facts equal the database.
    const rebuilt = {
      lotNumber: (received.after as { lotNumber?: string }).lotNumber ?? received.entity_id,
      measurements: rebuiltMeasurements,
      certificate: { number: cert.number, sha256: cert.sha256 },
    };
    const lot = (await db()('lot').where({ id: lotId }).first())!;
    const dbCert = (await db()('certificate').where({ id: lot.certificate_id! }).first())!;
    const dbMeasurements = await db()('measurement as m')
      .join('identity_test as t', 't.id', 'm.test_id')
      .join('stored_file as f', 'f.id', 'm.file_id')
      .join('container as c', 'c.id', 'm.container_id')
      .where('t.lot_id', lotId)
      .orderBy('m.id')
      .select<
        (Pick<MeasurementRow, 'id' | 'verdict' | 'match_score'> &
          Pick<ContainerRow, 'label'> &
          Pick<StoredFileRow, 'sha256'>)[]
      >('m.id', 'c.label', 'm.verdict', 'm.match_score', 'f.sha256');
    expect(rebuilt).toEqual({
      lotNumber: lot.lot_number,
      measurements: dbMeasurements.map((m) => ({
        id: Number(m.id),
        container: m.label,
        verdict: m.verdict,
        matchScore: Number(m.match_score),
        rawSha256: m.sha256,
      })),
      certificate: { number: dbCert.number, sha256: dbCert.sha256 },
    });
    const facts = JSON.parse(file('facts.json').toString()) as LotFacts;
    expect(facts.lotNumber).toBe(lot.lot_number);
    expect(facts.identityStatus).toBe('passed');
    expect(facts.tests[0].signatures.map((s) => s.meaning).sort()).toEqual(['performed', 'verified']);

    // 6. The export itself is on the record.
    const exported = await db()('audit_event').where({ action: 'lot.archive-exported', entity_id: String(lotId) });
    expect(exported).toHaveLength(1);
    expect(JSON.parse(exported[0].after_json!).manifestSha256).toBe(sha(file('manifest.json')));
  }, 60_000);
});

describe('JCAMP-DX downloads', () => {
  it('a measurement downloads as JCAMP-DX that both readers read; an operator may not download a reference copy', async () => {
    const m = (await db()('measurement as m')
      .join('identity_test as t', 't.id', 'm.test_id')
      .where('t.lot_id', lotId)
      .first<Pick<MeasurementRow, 'id' | 'file_id'> | undefined>('m.id', 'm.file_id'))!;
    const res = await olga.agent.get(`/api/measurements/${m.id}/jcamp`);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^chemical\/x-jcamp-dx/);
    const text = res.text;
    expect(text).toContain('##JCAMP-DX=4.24');
    expect(text).toContain(`##$DRUMLINE MEASUREMENT ID=${m.id}`);
    const raw = (await db()('stored_file').where({ id: m.file_id }).first())!.data;
    expect(text).toContain(`##$DRUMLINE RAW FILE SHA256=${sha(raw)}`);
    expect(readSpectrum(text, 'x.jdx').x.length).toBe(readSpectrum(raw, 'raw.csv').x.length);
    expect(convert(text).flatten[0].spectra[0].data.y.length).toBe(readSpectrum(raw, 'raw.csv').x.length);

    const refId = (await db()('reference_spectrum').orderBy('id', 'desc').first('id'))!.id;
    expect((await olga.agent.get(`/api/references/${refId}/jcamp`)).status).toBe(403);
    expect((await victor.agent.get(`/api/references/${refId}/jcamp`)).status).toBe(200);
    expect((await olga.agent.get('/api/measurements/999999999/jcamp')).status).toBe(404);
  });
});
