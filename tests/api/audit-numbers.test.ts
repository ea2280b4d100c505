/**
 * Business numbers in the audit views and exports (issue 18, item 3; docs/compliance.md, "Audit
 * trail in words"): records are named by their numbers (L-…, IC-…, REF-…, user names), field
 * names in words with the person or record an id names, event types in words with the code
 * beside them; the exports keep the stored ids and add the numbers beside them. A check of a
 * tampered certificate is recorded as a failed verification, never as "certificate.verified".
 */
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import type request from 'supertest';
import { auditNow } from '../../server/lib/audit';
import { issueCertificate } from '../../server/modules/certificates';
import { createPassedLot, type PassedLot } from './fixtures-certificates';
import { parseCsv } from './fixtures-audit';
import { agentFor, binaryBody, db } from './helpers';

type Agent = Awaited<ReturnType<typeof agentFor>>['agent'];

let lot: PassedLot;
let certId: number;
let certNumber: string;
let auditor: Agent;
let performedEventId: number;

function text(res: request.Response, cb: (e: Error | null, s: string) => void) {
  let s = '';
  res.setEncoding('utf8');
  res.on('data', (c: string) => (s += c));
  res.on('end', () => cb(null, s));
}

beforeAll(async () => {
  lot = await createPassedLot(db(), { containers: 2 });
  const meta = await issueCertificate(db(), {
    lotId: lot.lotId,
    testId: lot.testId,
    actor: { id: null, name: 'Drumline (system)' },
  });
  certId = meta.id;
  certNumber = (await db()('certificate').where({ id: certId }).first())!.number;
  // An event that names people and records by id inside its values, as test.performed does.
  performedEventId = await auditNow(db(), {
    actor: { id: lot.operator.id, name: lot.operator.fullName },
    action: 'test.performed',
    entityType: 'identity_test',
    entityId: lot.testId,
    before: { status: 'in-progress' },
    after: { status: 'awaiting-verification', performedBy: lot.operator.id, lotId: lot.lotId, certificateId: certId },
  });
  ({ agent: auditor } = await agentFor(['auditor']));
});

describe('audit views name records by number', () => {
  it('the list names the lot by its lot number and the actor by user name; the event type in words beside its code', async () => {
    const res = await auditor.get('/api/audit/events').query({ entityType: 'lot', entityId: String(lot.lotId) });
    expect(res.status).toBe(200);
    expect(res.body.events.length).toBeGreaterThan(0);
    for (const e of res.body.events) {
      expect(e.recordNumber).toBe(lot.lotNumber);
      expect(e.entityId).toBe(String(lot.lotId)); // the stored id stays
    }
    const recorded = res.body.events.find((e: { action: string }) => e.action === 'lot.certificate-recorded');
    expect(recorded.actionWords).toBe('Certificate recorded on the lot');
  });

  it('an event detail names fields in words and what their ids name ("performed by: Olga …", the lot number)', async () => {
    const res = await auditor.get(`/api/audit/events/${performedEventId}`);
    expect(res.status).toBe(200);
    expect(res.body.actorUsername).toBe(lot.operator.username);
    expect(res.body.actionWords).toBe('Test signed as performed');
    expect(res.body.recordNumber).toBe(`${lot.lotNumber} attempt 1`);
    const by = res.body.changes.find((c: { path: string }) => c.path === 'performedBy');
    expect(by).toMatchObject({ label: 'performed by', after: lot.operator.id });
    expect(by.afterName).toBe(`${lot.operator.fullName} (${lot.operator.username})`);
    const l = res.body.changes.find((c: { path: string }) => c.path === 'lotId');
    expect(l).toMatchObject({ label: 'lot id', afterName: lot.lotNumber });
    const c = res.body.changes.find((x: { path: string }) => x.path === 'certificateId');
    expect(c.afterName).toBe(certNumber);
    // a field that is no reference gets no name
    expect(res.body.changes.find((x: { path: string }) => x.path === 'status').afterName).toBeUndefined();
  });

  it("a record history names the record by number and each event's references", async () => {
    const res = await auditor.get(`/api/history/certificate/${certId}`);
    expect(res.status).toBe(200);
    expect(res.body.recordNumber).toBe(certNumber);
    const issued = res.body.events.find((e: { action: string }) => e.action === 'certificate.issued');
    expect(issued.recordNumber).toBe(certNumber);
    expect(issued.changes.find((c: { path: string }) => c.path === 'lotId').afterName).toBe(lot.lotNumber);
    const ref = (await db()('reference_spectrum').where({ code: lot.referenceCode }).first())!;
    const h = await auditor.get(`/api/history/reference_spectrum/${ref.id}`);
    expect(h.body.recordNumber).toBe(lot.referenceCode);
    const user = await auditor.get(`/api/history/user/${lot.operator.id}`);
    expect(user.body.recordNumber).toBe(lot.operator.username);
  });
});

describe('exports keep the stored ids and add the business numbers beside them', () => {
  it('CSV: actor_username, action_words, record_number and named_ids next to the stored columns', async () => {
    const res = await auditor
      .get('/api/audit/export.csv')
      .query({ entityType: 'identity_test', entityId: String(lot.testId), sort: 'asc' })
      .buffer(true)
      .parse(text);
    expect(res.status).toBe(200);
    const rows = parseCsv((res.body as string).slice(1));
    const header = rows.find((r) => r[0] === 'event_id')!;
    const col = (name: string) => header.indexOf(name);
    for (const name of [
      'actor_id',
      'actor_username',
      'entity_id',
      'record_number',
      'action',
      'action_words',
      'named_ids',
    ])
      expect(col(name), name).toBeGreaterThanOrEqual(0);
    const row = rows.find((r) => r[0] === String(performedEventId))!;
    expect(row[col('entity_id')]).toBe(String(lot.testId));
    expect(row[col('record_number')]).toBe(`${lot.lotNumber} attempt 1`);
    expect(row[col('actor_id')]).toBe(String(lot.operator.id));
    expect(row[col('actor_username')]).toBe(lot.operator.username);
    expect(row[col('action')]).toBe('test.performed');
    expect(row[col('action_words')]).toBe('Test signed as performed');
    expect(row[col('named_ids')]).toContain(`lot ${lot.lotId} = ${lot.lotNumber}`);
    expect(row[col('named_ids')]).toContain(`certificate ${certId} = ${certNumber}`);
    expect(row[col('named_ids')]).toContain(`user ${lot.operator.id} = ${lot.operator.username}`);
    // the stored JSON is untouched
    expect(JSON.parse(row[col('after')])).toMatchObject({ lotId: lot.lotId, performedBy: lot.operator.id });
    // the filter line names the record by its number too
    expect(rows.map((r) => r[0]).join('\n')).toContain(`record id "${lot.testId}" (${lot.lotNumber} attempt 1)`);
  });

  it('PDF: records by number with the stored id, event types in words, fields in words with names', async () => {
    const res = await auditor
      .get('/api/audit/export.pdf')
      .query({ entityType: 'identity_test', entityId: String(lot.testId), sort: 'asc' })
      .buffer(true)
      .parse(binaryBody);
    expect(res.status).toBe(200);
    const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'audit-num-')), 'r.pdf');
    fs.writeFileSync(file, res.body as Buffer);
    // pdftotext breaks long cells into lines: compare without white space
    const t = execFileSync('pdftotext', ['-raw', file, '-']).toString().replace(/\s+/g, '');
    const has = (s: string) => expect(t).toContain(s.replace(/\s+/g, ''));
    has(`Identity test ${lot.lotNumber} attempt 1 (id ${lot.testId})`);
    has('Test signed as performed');
    has('test.performed');
    has(`performed by: ${lot.operator.fullName} (${lot.operator.username}) [id ${lot.operator.id}]`);
    has(`lot id: ${lot.lotNumber} [id ${lot.lotId}]`);
    expect(t).not.toMatch(/performedBy:\d/);
  });
});

describe('certificate checks', () => {
  it('a tampered certificate is recorded as a failed verification, not as certificate.verified', async () => {
    const { agent, user } = await agentFor(['auditor']);
    const pdf = (await db()('certificate').where({ id: certId }).select('pdf').first())!.pdf;
    const tampered = Buffer.from(pdf);
    const at = tampered.indexOf('Identity certificate IC-');
    expect(at).toBeGreaterThan(0);
    tampered[at] = 'i'.charCodeAt(0);
    const res = await agent.post('/api/certificates/verify').attach('file', tampered, 'tampered.pdf');
    expect(res.status).toBe(200);
    expect(res.body.verdict).toBe('not authentic');
    const mine = await db()('audit_event').where({ actor_id: user.id }).where('action', 'like', 'certificate.%');
    expect(mine.map((e: { action: string }) => e.action)).toEqual(['certificate.verification-failed']);
    expect(JSON.parse(mine[0].after_json!)).toMatchObject({ verdict: 'not authentic', byteIdentical: false });
    const ev = await auditor.get(`/api/audit/events/${mine[0].id}`);
    expect(ev.body.actionWords).toBe('Certificate checked: NOT authentic');
    expect(ev.body.recordNumber).toBe(certNumber);
  });

  it('an intact certificate is still recorded as certificate.verified', async () => {
    const { agent, user } = await agentFor(['auditor']);
    const pdf = (await db()('certificate').where({ id: certId }).select('pdf').first())!.pdf;
    const res = await agent.post('/api/certificates/verify').attach('file', pdf, 'certificate.pdf');
    expect(res.body.verdict).toBe('authentic');
    const mine = await db()('audit_event').where({ actor_id: user.id }).where('action', 'like', 'certificate.%');
    expect(mine.map((e: { action: string }) => e.action)).toEqual(['certificate.verified']);
  });
});
