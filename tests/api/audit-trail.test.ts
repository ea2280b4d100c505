/**
 * The audit trail browser (issue 7): filters, sorting and keyset paging return exactly the right
 * events; the detail shows before/after field by field; record history lists a record's events in
 * time order with its signatures; roles see what they should (21 CFR 11.10(d)(e)(g), Annex 11 §9,
 * §12.4); exports state their filter and are themselves audited; times are UTC.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { execFileSync } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { agentFor, binaryBody, db, makeUser } from './helpers';
import { parseCsv, privateEntityType, seedEvents } from './fixtures-audit';
import { loadConfig } from '../../server/lib/config';

const SITE_ZONE = loadConfig().siteTimeZone;

type Agent = Awaited<ReturnType<typeof agentFor>>['agent'];
interface Ev {
  id: number;
  occurredAt: string;
  actorId: number | null;
  action: string;
  entityType: string;
  entityId: string | null;
  reason: string | null;
}

const N = 25;
const T = privateEntityType('aut');
let auditor: Agent;
let qa: Agent;
let admin: Agent;
let operator: Agent;
let uA: { id: number; fullName: string };
let uB: { id: number; fullName: string };
let seeded: Ev[] = []; // oldest first

function reasonOf(i: number): string | null {
  return [
    `calibration drift corrected, "ref" ${i}`,
    'label misprint\nsecond line',
    null,
    'part of the re-measure plan',
  ][i % 4];
}

async function allPages(
  agent: Agent,
  query: Record<string, string | number>,
  limit: number,
): Promise<{ ids: number[]; pages: number; firstTotal: unknown }> {
  const ids: number[] = [];
  let cursor: string | null = null;
  let pages = 0;
  let firstTotal: unknown = undefined;
  do {
    const res = await agent.get('/api/audit/events').query({ ...query, limit, ...(cursor ? { cursor } : {}) });
    expect(res.status, JSON.stringify(res.body)).toBe(200);
    if (pages === 0) firstTotal = res.body.total;
    else expect(res.body.total).toBeNull();
    expect(res.body.events.length).toBeLessThanOrEqual(limit);
    ids.push(...res.body.events.map((e: Ev) => e.id));
    cursor = res.body.nextCursor;
    pages++;
  } while (cursor && pages < 100);
  return { ids, pages, firstTotal };
}

beforeAll(async () => {
  ({ agent: auditor } = await agentFor(['auditor']));
  ({ agent: qa } = await agentFor(['qa_manager']));
  ({ agent: admin } = await agentFor(['admin']));
  ({ agent: operator } = await agentFor(['operator']));
  uA = await makeUser(['operator']);
  uB = await makeUser(['verifier']);
  await seedEvents(N, (i) => ({
    actor: i % 2 ? { id: uA.id, name: uA.fullName } : { id: uB.id, name: uB.fullName },
    action: `${T}.${['created', 'changed', 'signed'][i % 3]}`,
    entityType: T,
    entityId: String(i % 5),
    before: i % 3 === 1 ? { status: 'draft', n: i, tags: ['a'] } : null,
    after: { status: 'approved', n: i, tags: ['a', 'b'], ...(i % 3 === 1 ? { note: 'new' } : {}) },
    reason: reasonOf(i),
    ip: '127.0.0.1',
  }));
  const rows = await db()('audit_event').where({ entity_type: T }).orderBy('id');
  seeded = rows.map((r) => ({
    id: Number(r.id),
    occurredAt: new Date(r.occurred_at).toISOString(),
    actorId: r.actor_id,
    action: r.action,
    entityType: r.entity_type,
    entityId: r.entity_id,
    reason: r.reason,
  }));
  expect(seeded.length).toBe(N);
});

describe('filters and sorting', () => {
  it('record type: every seeded event, newest first by default and oldest first on request', async () => {
    const desc = await auditor.get('/api/audit/events').query({ entityType: T, limit: 200 });
    expect(desc.status).toBe(200);
    expect(desc.body.events.map((e: Ev) => e.id)).toEqual(seeded.map((e) => e.id).reverse());
    expect(desc.body.total).toEqual({ count: N, exact: true });
    expect(desc.body.scope).toBe('all');
    const asc = await auditor.get('/api/audit/events').query({ entityType: T, sort: 'asc', limit: 200 });
    expect(asc.body.events.map((e: Ev) => e.id)).toEqual(seeded.map((e) => e.id));
    // summaries carry the columns the table shows
    expect(asc.body.events[0]).toMatchObject({
      actorName: expect.any(String),
      action: seeded[0].action,
      entityId: '0',
      ip: '127.0.0.1',
    });
  });

  it('user (actor), entity id, exact action and action prefix', async () => {
    const cases: [Record<string, string | number>, (e: Ev, i: number) => boolean][] = [
      [{ actorId: uA.id }, (_e, i) => i % 2 === 1],
      [{ entityId: '3' }, (_e, i) => i % 5 === 3],
      [{ action: `${T}.changed` }, (_e, i) => i % 3 === 1],
      [{ action: `${T}.*` }, () => true],
      [{ action: `${T}.c*` }, (_e, i) => i % 3 !== 2],
      [{ actorId: uB.id, action: `${T}.signed` }, (_e, i) => i % 2 === 0 && i % 3 === 2],
    ];
    for (const [q, keep] of cases) {
      const res = await auditor.get('/api/audit/events').query({ entityType: T, sort: 'asc', limit: 200, ...q });
      expect(res.status, JSON.stringify(q)).toBe(200);
      const want = seeded.filter(keep).map((e) => e.id);
      expect(want.length, JSON.stringify(q)).toBeGreaterThan(0);
      expect(
        res.body.events.map((e: Ev) => e.id),
        JSON.stringify(q),
      ).toEqual(want);
      expect(res.body.total, JSON.stringify(q)).toEqual({ count: want.length, exact: true });
    }
    // an action filter alone (no record type) finds them too: the names are private to this test
    const alone = await auditor.get('/api/audit/events').query({ action: `${T}.*`, limit: 200 });
    expect(alone.body.events.length).toBe(N);
  });

  it('free text in the reason: the exact text, case-insensitive, wildcards taken literally; not counted', async () => {
    const cases: [string, (i: number) => boolean][] = [
      ['drift', (i) => i % 4 === 0],
      ['DRIFT corrected', (i) => i % 4 === 0],
      ['misprint', (i) => i % 4 === 1],
      ['re-measure', (i) => i % 4 === 3],
      ['of the', (i) => i % 4 === 3],
      ['"ref" 4', (i) => i === 4 || (i >= 40 && i % 4 === 0)], // quotes and a number: exact text ("ref" 4, "ref" 40...)
      ['corrected misprint', () => false], // both words exist, never in this order
      ['%', () => false], // LIKE wildcards are escaped
      ['mis_rint', () => false],
    ];
    for (const [q, keep] of cases) {
      // a text search reads the trail window by window: follow the cursor until it is complete
      const { ids, firstTotal } = await allPages(auditor, { entityType: T, q, sort: 'asc' }, 200);
      expect(ids, q).toEqual(seeded.filter((_e, i) => keep(i)).map((e) => e.id));
      expect(firstTotal, q).toBeNull();
    }
    const one = await auditor.get('/api/audit/events').query({ entityType: T, q: 'misprint', limit: 200 });
    expect(one.body.search).toMatchObject({ window: 50_000 });
  });

  it('date range: from inclusive, to exclusive, in UTC instants (any zone offset accepted)', async () => {
    const from = seeded[5].occurredAt;
    const to = seeded[12].occurredAt;
    const res = await auditor.get('/api/audit/events').query({ entityType: T, from, to, sort: 'asc', limit: 200 });
    expect(res.status).toBe(200);
    expect(res.body.events.map((e: Ev) => e.id)).toEqual(seeded.slice(5, 12).map((e) => e.id));
    // the same instant written with a +02:00 offset selects the same events
    const shift = (iso: string) => {
      const d = new Date(new Date(iso).getTime() + 2 * 3600_000);
      return d.toISOString().replace('Z', '+02:00');
    };
    const res2 = await auditor
      .get('/api/audit/events')
      .query({ entityType: T, from: shift(from), to: shift(to), sort: 'asc', limit: 200 });
    expect(res2.body.events.map((e: Ev) => e.id)).toEqual(seeded.slice(5, 12).map((e) => e.id));
  });
});

describe('keyset pagination', () => {
  it.each(['desc', 'asc'] as const)('pages of 7 (%s) join up to all events once, in order, and end', async (sort) => {
    const { ids, pages, firstTotal } = await allPages(auditor, { entityType: T, sort }, 7);
    const want = seeded.map((e) => e.id);
    expect(ids).toEqual(sort === 'asc' ? want : [...want].reverse());
    expect(pages).toBe(Math.ceil(N / 7));
    expect(firstTotal).toEqual({ count: N, exact: true });
  });

  it('a page boundary between events with the same time loses nothing (ties broken by event number)', async () => {
    // Three events in the same millisecond: appendAudit-style rows with identical occurred_at.
    const S = privateEntityType('tie');
    const t = new Date(Date.now() + 5);
    const { bulkAppendAudit } = await import('../../server/modules/audit/bulk');
    await bulkAppendAudit(db(), 3, () => ({
      occurredAt: t,
      actor: { id: null, name: 'test' },
      action: 'test.tie',
      entityType: S,
    }));
    const rows = await db()('audit_event').where({ entity_type: S }).orderBy('id');
    expect(new Set(rows.map((r) => new Date(r.occurred_at).getTime())).size).toBe(1);
    for (const sort of ['asc', 'desc'] as const) {
      const { ids } = await allPages(auditor, { entityType: S, sort }, 1);
      const want = rows.map((r) => Number(r.id));
      expect(ids).toEqual(sort === 'asc' ? want : want.reverse());
    }
  });

  it('refuses a forged cursor and a reversed date range with 400', async () => {
    const bad = await auditor.get('/api/audit/events').query({ cursor: 'not-a-cursor' });
    expect(bad.status).toBe(400);
    const rev = await auditor
      .get('/api/audit/events')
      .query({ from: '2026-02-01T00:00:00Z', to: '2026-01-01T00:00:00Z' });
    expect(rev.status).toBe(400);
    const badAction = await auditor.get('/api/audit/events').query({ action: "x' OR 1=1" });
    expect(badAction.status).toBe(400);
    const badDate = await auditor.get('/api/audit/events').query({ from: '14.03.2026' });
    expect(badDate.status).toBe(400);
  });
});

describe('event detail', () => {
  it('shows before and after parsed, with each field marked added, changed, removed or unchanged', async () => {
    const ev = seeded[1]; // i=1: before and after
    const res = await qa.get(`/api/audit/events/${ev.id}`);
    expect(res.status).toBe(200);
    expect(res.body.before).toEqual({ status: 'draft', n: 1, tags: ['a'] });
    expect(res.body.after).toEqual({ status: 'approved', n: 1, tags: ['a', 'b'], note: 'new' });
    const byPath = Object.fromEntries(res.body.changes.map((c: { path: string; kind: string }) => [c.path, c.kind]));
    expect(byPath).toEqual({ status: 'changed', n: 'unchanged', tags: 'changed', note: 'added' }); // arrays of plain values compare whole
    expect(res.body.changes.find((c: { path: string }) => c.path === 'tags')).toMatchObject({
      before: ['a'],
      after: ['a', 'b'],
    });
    expect(res.body.hash).toMatch(/^[0-9a-f]{64}$/);
    expect(res.body.prevHash).toMatch(/^[0-9a-f]{64}$/);
    expect((await qa.get('/api/audit/events/999999999')).status).toBe(404);
  });
});

describe('who sees the trail', () => {
  it.each(['operator', 'verifier'] as const)('%s gets 403 on the browser, the detail and the exports', async (role) => {
    const { agent } = await agentFor([role]);
    for (const p of [
      '/api/audit/events',
      `/api/audit/events/${seeded[0].id}`,
      '/api/audit/facets',
      '/api/audit/export.csv',
      '/api/audit/export.pdf',
    ])
      expect((await agent.get(p)).status, p).toBe(403);
  });

  it('an administrator sees account and sign-in events only', async () => {
    const res = await admin.get('/api/audit/events').query({ limit: 200 });
    expect(res.status).toBe(200);
    expect(res.body.scope).toBe('accounts');
    expect(res.body.events.length).toBeGreaterThan(0); // at least the sign-ins of this file
    for (const e of res.body.events) expect(e.entityType).toBe('user');
    const mine = await admin.get('/api/audit/events').query({ entityType: T });
    expect(mine.body.events).toEqual([]);
    expect((await admin.get(`/api/audit/events/${seeded[0].id}`)).status).toBe(404);
    const facets = await admin.get('/api/audit/facets');
    expect(facets.body.entityTypes).toEqual(['user']);
    for (const a of facets.body.actions) expect(a).toMatch(/^(auth|user)\./);
  });

  it('facets list the actions, record types and users that occur', async () => {
    const res = await auditor.get('/api/audit/facets');
    expect(res.status).toBe(200);
    expect(res.body.actions).toEqual(expect.arrayContaining([`${T}.created`, `${T}.changed`, `${T}.signed`]));
    expect(res.body.entityTypes).toContain(T);
    expect(res.body.actors.map((a: { id: number }) => a.id)).toEqual(expect.arrayContaining([uA.id, uB.id]));
  });
});

describe('record history', () => {
  it("lists one record's events oldest first with the signatures on it", async () => {
    const sigAt = new Date();
    const [sigId] = await db()('e_signature').insert({
      user_id: uB.id,
      printed_name: uB.fullName,
      meaning: 'approved',
      entity_type: T,
      entity_id: '2',
      content_hash: 'a'.repeat(64),
      statement: 'looks right',
      signed_at: sigAt,
    });
    const res = await operator.get(`/api/history/${T}/2`);
    expect(res.status).toBe(200);
    expect(res.body.events.map((e: Ev) => e.id)).toEqual(seeded.filter((_e, i) => i % 5 === 2).map((e) => e.id));
    expect(res.body.events[0].after).toMatchObject({ status: 'approved' });
    expect(res.body.signatures).toEqual([
      {
        id: sigId,
        userId: uB.id,
        printedName: uB.fullName,
        meaning: 'approved',
        signedAt: sigAt.toISOString(),
        contentHash: 'a'.repeat(64),
        statement: 'looks right',
      },
    ]);
    expect(res.body.truncated).toBe(false);
    const none = await auditor.get(`/api/history/${T}/no-such-record`);
    expect(none.status).toBe(200);
    expect(none.body.events).toEqual([]);
  });

  it('account history: administrators and auditors yes, operators no; administrators see no GMP record history', async () => {
    const u = await makeUser(['operator']);
    const { agent } = await agentFor(['admin']);
    const upd = await agent
      .patch(`/api/users/${u.id}`)
      .send({ roles: ['operator', 'auditor'], reason: 'reads records for the self-inspection' });
    expect(upd.status).toBe(200);
    const h = await agent.get(`/api/history/user/${u.id}`);
    expect(h.status).toBe(200);
    expect(h.body.events.map((e: { action: string }) => e.action)).toContain('user.roles-changed');
    expect((await auditor.get(`/api/history/user/${u.id}`)).status).toBe(200);
    expect((await operator.get(`/api/history/user/${u.id}`)).status).toBe(403);
    expect((await agent.get(`/api/history/${T}/2`)).status).toBe(403);
  });
});

describe('exports', () => {
  it('CSV: the filter stated on top, RFC 4180 quoting, every matching event, and the export audited', async () => {
    const res = await auditor
      .get('/api/audit/export.csv')
      .query({ entityType: T, sort: 'asc' })
      .buffer(true)
      .parse((r, cb) => {
        let s = '';
        r.setEncoding('utf8');
        r.on('data', (c: string) => (s += c));
        r.on('end', () => cb(null, s));
      });
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toMatch(/^text\/csv/);
    expect(res.headers['content-disposition']).toMatch(/attachment; filename="audit-trail-\d{8}T\d{6}Z\.csv"/);
    const text = res.body as string;
    expect(text.charCodeAt(0)).toBe(0xfeff); // BOM so spreadsheet programs read UTF-8
    const rows = parseCsv(text.slice(1));
    const comments = rows.filter((r) => r[0].startsWith('#')).map((r) => r[0]);
    expect(comments.join('\n')).toContain(`record type "${T}"`);
    expect(comments.join('\n')).toContain('sorted oldest first');
    const header = rows.find((r) => r[0] === 'event_id')!;
    expect(header).toEqual([
      'event_id',
      'occurred_at_utc',
      'actor_id',
      'actor_username',
      'actor_name',
      'action',
      'action_words',
      'entity_type',
      'entity_id',
      'record_number',
      'reason',
      'before',
      'after',
      'named_ids',
      'ip',
      'prev_hash',
      'hash',
    ]);
    const data = rows.slice(rows.indexOf(header) + 1);
    expect(data.length).toBe(N);
    expect(data.map((r) => Number(r[0]))).toEqual(seeded.map((e) => e.id));
    data.forEach((r, i) => {
      expect(r[1]).toBe(seeded[i].occurredAt);
      expect(r[10]).toBe(reasonOf(i) ?? ''); // commas, quotes and line breaks survive the round trip
      expect(JSON.parse(r[12])).toMatchObject({ n: i });
    });
    const ev = (await db()('audit_event')
      .where({ id: Number(res.headers['x-audit-export-event']) })
      .first())!;
    expect(ev.action).toBe('audit.exported');
    expect(JSON.parse(ev.after_json!)).toMatchObject({ format: 'csv', filter: { entityType: T, sort: 'asc' } });
  });

  it('PDF: the filter stated, page x of y, the events listed, and the export audited', async () => {
    const res = await auditor
      .get('/api/audit/export.pdf')
      .query({ entityType: T, sort: 'asc' })
      .buffer(true)
      .parse(binaryBody);
    expect(res.status).toBe(200);
    expect(res.headers['content-type']).toBe('application/pdf');
    const pdf = res.body as Buffer;
    expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
    const file = path.join(fs.mkdtempSync(path.join(os.tmpdir(), 'audit-pdf-')), 'r.pdf');
    fs.writeFileSync(file, pdf);
    const text = execFileSync('pdftotext', ['-layout', file, '-']).toString();
    const pages = Number(/Pages:\s+(\d+)/.exec(execFileSync('pdfinfo', [file]).toString())![1]);
    expect(text).toContain('Audit trail report');
    expect(text).toContain(`record type "${T}"`);
    expect(text).toContain(`Page 1 of ${pages}`);
    expect(text).toContain(`${N} matching events`);
    expect(text).toContain('misprint');
    expect(text).toContain(`shown in the site time zone ${SITE_ZONE}`); // times named in the site zone
    // the first event's time in the site zone, computed here with Intl's Swedish format (YYYY-MM-DD hh:mm:ss)
    const local = new Intl.DateTimeFormat('sv-SE', {
      timeZone: SITE_ZONE,
      dateStyle: 'short',
      timeStyle: 'medium',
    }).format(new Date(seeded[0].occurredAt));
    expect(text).toContain(local);
    const ev = (await db()('audit_event')
      .where({ id: Number(res.headers['x-audit-export-event']) })
      .first())!;
    expect(ev.action).toBe('audit.exported');
    expect(JSON.parse(ev.after_json!)).toMatchObject({ format: 'pdf', filter: { entityType: T } });
  });
});

describe('time', () => {
  it('events are stamped by the server clock in UTC and returned as UTC instants; the site zone is named by /api/auth/me', async () => {
    const { agent, user } = await agentFor(['auditor']);
    const before = Date.now();
    // the sign-in of agentFor wrote an auth.signed-in event for this user
    const res = await agent.get('/api/audit/events').query({ actorId: user.id, action: 'auth.signed-in' });
    expect(res.status).toBe(200);
    const ev = res.body.events[0];
    expect(ev.occurredAt).toMatch(/^\d{4}-\d{2}-\d{2}T\d{2}:\d{2}:\d{2}\.\d{3}Z$/);
    expect(Math.abs(new Date(ev.occurredAt).getTime() - before)).toBeLessThan(10_000);
    // stored as UTC wall time: the column's text equals the ISO instant without the Z
    const [[raw]] = await db().raw('SELECT CAST(occurred_at AS CHAR) AS t FROM audit_event WHERE id = ?', [ev.id]);
    expect(raw.t.replace(' ', 'T') + 'Z').toBe(ev.occurredAt);
    const me = await agent.get('/api/auth/me');
    expect(me.body.site.timeZone).toBe(SITE_ZONE);
  });
});
