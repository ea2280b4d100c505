/**
 * A large export streams (issue 7): 100,000 events leave as CSV page by page, the server stops
 * reading the database while the client does not read, memory stays far below the export's size,
 * and every event arrives exactly once, in order. Also: the first-page count is capped for speed.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import http from 'node:http';
import v8 from 'node:v8';
import vm from 'node:vm';
import type { AddressInfo } from 'node:net';
import request from 'supertest';
import { binaryBody, db, makeUser, testApp } from './helpers';
import { privateEntityType, seedEvents } from './fixtures-audit';
import { verifyChain } from '../../server/lib/audit';

const N = 100_000;
const E = privateEntityType('exp');
let server: http.Server;
let base = '';
let cookie = '';

beforeAll(async () => {
  const filler = 'x'.repeat(400);
  const t = performance.now();
  // a few events first, so that the 100,000 below cannot all fit the first text-search window of the trail
  await seedEvents(20, () => ({
    actor: { id: null, name: 'bulk export test' },
    action: 'test.bulk-before',
    entityType: `${E}_pre`,
  }));
  await seedEvents(
    N,
    (i) => ({
      actor: { id: null, name: 'bulk export test' },
      action: 'test.bulk',
      entityType: E,
      entityId: String(i),
      before: { status: 'draft', note: filler, n: i },
      after: { status: 'approved', note: filler, n: i },
      reason: i % 10 === 0 ? `batch "${i}", checked` : null,
    }),
    { batchSize: 2000, chunkSize: 50_000 },
  );
  console.log(`[audit-export] seeded ${N} events in ${((performance.now() - t) / 1000).toFixed(1)} s`);
  const u = await makeUser(['auditor']);
  const res = await request(testApp()).post('/api/auth/sign-in').send({ username: u.username, password: u.password });
  expect(res.status).toBe(200);
  cookie = String(res.headers['set-cookie'][0]).split(';')[0];
  server = testApp().listen(0, '127.0.0.1');
  await new Promise((r) => server.once('listening', r));
  base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
}, 600_000);

afterAll(async () => {
  await new Promise((r) => server?.close(r));
});

describe('export of 100,000 events', () => {
  it('the bulk-seeded events form a valid chain (hashed like appendAudit)', async () => {
    const report = await verifyChain(db());
    expect(report).toMatchObject({ ok: true });
  }, 120_000);

  it('streams: the server pauses with a paused client, memory stays bounded, every event arrives once and in order', async () => {
    // Count the page queries the export runs against audit_event.
    let pageQueries = 0;
    const onQuery = (q: { sql: string }) => {
      if (/from `audit_event`/i.test(q.sql) && /limit \?/i.test(q.sql) && /`entity_type` = \?/.test(q.sql))
        pageQueries++;
    };
    db().on('query', onQuery);
    // Memory held, not garbage awaiting collection: the heap is measured after a full collection
    // (every 50 chunks), so per-row garbage (the business numbers of each event) does not count.
    v8.setFlagsFromString('--expose-gc');
    const gc = vm.runInNewContext('gc') as () => void;
    gc();
    const heapStart = process.memoryUsage().heapUsed;
    let heapPeak = heapStart;
    try {
      const result = await new Promise<{
        bytes: number;
        chunks: number;
        pagesWhilePaused: number;
        lines: string[];
        ids: number[];
        status: number;
      }>((resolve, reject) => {
        const req = http.get(
          `${base}/api/audit/export.csv?entityType=${E}&sort=asc`,
          { headers: { Cookie: cookie } },
          (res) => {
            let bytes = 0;
            let chunks = 0;
            let pagesWhilePaused = -1;
            let tail = '';
            const lines: string[] = [];
            const ids: number[] = [];
            res.setEncoding('utf8');
            res.on('data', (c: string) => {
              bytes += Buffer.byteLength(c);
              chunks++;
              if (chunks % 50 === 0) {
                gc();
                heapPeak = Math.max(heapPeak, process.memoryUsage().heapUsed);
              }
              // keep only the event ids, not the data
              const parts = (tail + c).split('\r\n');
              tail = parts.pop()!;
              for (const l of parts) {
                const m = /^(\d+),/.exec(l);
                if (m) ids.push(Number(m[1]));
                else if (lines.length < 10) lines.push(l);
              }
              if (chunks === 1) {
                // Stop reading for a while: back-pressure must stop the server's page queries.
                res.pause();
                setTimeout(() => {
                  pagesWhilePaused = pageQueries;
                  res.resume();
                }, 1500);
              }
            });
            res.on('end', () => resolve({ bytes, chunks, pagesWhilePaused, lines, ids, status: res.statusCode ?? 0 }));
            res.on('error', reject);
          },
        );
        req.on('error', reject);
      });
      expect(result.status).toBe(200);
      const totalPages = Math.ceil(N / 1000);
      console.log(
        `[audit-export] ${(result.bytes / 1e6).toFixed(1)} MB in ${result.chunks} chunks; page queries while paused ${result.pagesWhilePaused}, in all ${pageQueries}; heap peak +${((heapPeak - heapStart) / 1e6).toFixed(1)} MB`,
      );
      // every event once, in order
      expect(result.ids.length).toBe(N);
      for (let i = 1; i < result.ids.length; i++)
        if (result.ids[i] !== result.ids[i - 1] + 1) throw new Error(`event order broken at ${i}`);
      expect(result.lines.some((l) => l.includes(`# Filter: record type ""${E}""; sorted oldest first`))).toBe(true); // quotes doubled inside the quoted field
      // streamed: many chunks, paged queries, and while the client read nothing only a few pages were fetched
      expect(result.bytes).toBeGreaterThan(N * 900);
      expect(result.chunks).toBeGreaterThan(100);
      expect(pageQueries).toBeGreaterThanOrEqual(totalPages);
      expect(result.pagesWhilePaused).toBeGreaterThan(0);
      expect(result.pagesWhilePaused).toBeLessThan(totalPages / 4);
      // memory: far below the export's size (a buffered export would hold all of it, and more)
      expect(heapPeak - heapStart).toBeLessThan(result.bytes / 2);
    } finally {
      db().off('query', onQuery);
    }
  }, 300_000);

  it('the first page counts at most 10,000 and says "more than"', async () => {
    const res = await request(testApp())
      .get('/api/audit/events')
      .set('Cookie', cookie)
      .query({ entityType: E, limit: 10 });
    expect(res.status).toBe(200);
    expect(res.body.total).toEqual({ count: 10_000, exact: false });
    expect(res.body.events.length).toBe(10);
    expect(res.body.nextCursor).toEqual(expect.any(String));
  });

  it('a text search over 100,000 events reads one window (50,000 events) per request and continues where it stopped', async () => {
    const ask = (cursor?: string) =>
      request(testApp())
        .get('/api/audit/events')
        .set('Cookie', cookie)
        .query({ q: 'batch "99990",', sort: 'asc', ...(cursor ? { cursor } : {}) });
    const first = await ask();
    expect(first.status).toBe(200);
    // the oldest 50,000 events of the trail end before event 99,990 of this batch
    expect(first.body.events).toEqual([]);
    expect(first.body.search).toMatchObject({ complete: false, window: 50_000 });
    expect(first.body.total).toBeNull();
    expect(first.body.nextCursor).toEqual(expect.any(String));
    let res = first;
    const found: { entityId: string }[] = [];
    for (let i = 0; i < 20 && res.body.nextCursor; i++) {
      res = await ask(res.body.nextCursor);
      expect(res.status).toBe(200);
      found.push(...res.body.events);
    }
    expect(res.body.search.complete).toBe(true);
    expect(found.map((e) => e.entityId)).toEqual(['99990']);
  });

  it('the PDF report of a large selection is capped and says so', async () => {
    const res = await request(testApp())
      .get('/api/audit/export.pdf')
      .set('Cookie', cookie)
      .query({ entityType: E })
      .buffer(true)
      .parse(binaryBody);
    expect(res.status).toBe(200);
    const { execFileSync } = await import('node:child_process');
    const text = execFileSync('pdftotext', ['-', '-'], {
      input: res.body as Buffer,
      maxBuffer: 64 * 1024 * 1024,
    }).toString();
    expect(text.replace(/\s+/g, ' ')).toMatch(
      /This report lists the first 2,000 of more than 10,000 matching events\. The CSV export of the same filter contains every event\./,
    );
    expect(text).toMatch(/Page \d+ of \d+/);
  }, 120_000);
});
