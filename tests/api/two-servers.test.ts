/**
 * Stateless app servers (issue 13 item 2): two Drumline processes on one MariaDB run the
 * concurrency suite (tests/api/concurrency-suite.ts) with requests alternating between them;
 * afterwards the whole database is checked (server/ops/record-checks.ts): the audit chain is
 * intact, every certificate verifies, every stored file hashes to its record. Background jobs
 * run on exactly one of them (the lease row), and a mail row that a crashed server left
 * 'sending' is taken up again and delivered.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import type { Knex } from 'knex';
import { requeueStale } from '../../server/lib/mail';
import { checkCertificates, checkStoredFiles } from '../../server/ops/record-checks';
import { verifyChain } from '../../server/lib/audit';
import { db, ownerDb } from './helpers';
import { startServer, stopAll, type ServerProcess } from './server-process';
import { runConcurrencySuite } from './concurrency-suite';

let a: ServerProcess;
let b: ServerProcess;
let owner: Knex;
// Files stored before this file ran belong to other test files (one of them tampers a file on
// purpose to raise an integrity alert); these servers' own files are the ones checked here.
let filesBefore = 0;

beforeAll(async () => {
  owner = ownerDb();
  filesBefore = Number((await db()('stored_file').max({ m: 'id' }).first())?.m ?? 0);
  // Leases left by earlier test processes would keep the mail job from these two for a while.
  await db()('job_lease')
    .where({ name: 'mail' })
    .update({ expires_at: new Date(0) });
  [a, b] = await Promise.all([
    startServer({ MAIL_SENDING_TIMEOUT_S: '2' }),
    startServer({ MAIL_SENDING_TIMEOUT_S: '2' }),
  ]);
}, 120_000);

afterAll(async () => {
  await stopAll();
  await owner?.destroy();
});

describe('two Drumline processes on one database', () => {
  it('run the concurrency suite without a duplicate, a gap, a lost signature or a broken chain', async () => {
    const r = await runConcurrencySuite({ urls: [a.url, b.url], rt: db(), owner });
    expect(r.lotNumbers).toHaveLength(11);
    console.log(`[two-servers] certificates pending after verification: ${r.pendingCertificates} of 11`);
    const chain = await verifyChain(db());
    expect(chain.ok, JSON.stringify(chain)).toBe(true);
    const certs = await checkCertificates(db());
    expect(certs.problems).toEqual([]);
    expect(certs.checked).toBeGreaterThanOrEqual(11);
    const files = await checkStoredFiles(db(), filesBefore);
    expect(files.problems).toEqual([]);
    expect(files.checked).toBeGreaterThan(0);
    // Both processes served requests (their request logs name the routes they answered).
    expect(a.output()).toMatch(/"route":"\/api\/tests\/:id\/verify"/);
    expect(b.output()).toMatch(/"route":"\/api\/tests\/:id\/verify"/);
  }, 180_000);

  it('run the mail job on one of them only, and deliver a row a crashed server left "sending"', async () => {
    const now = Date.now();
    const [id] = await db()('mail_outbox').insert({
      to_address: 'left-sending@test.example',
      subject: 'left sending by a crashed server',
      body: 'x',
      status: 'sending',
      attempts: 0,
      created_at: new Date(now - 60_000),
      next_attempt_at: new Date(now - 60_000),
      claimed_at: new Date(now - 30_000),
      claimed_by: 'crashed-host:4242:abcdef',
    });
    let row: { status: string; attempts: number; last_error: string | null } | undefined;
    for (let i = 0; i < 100; i++) {
      row = await db()('mail_outbox').where({ id }).first();
      if (row?.status === 'sent') break;
      await new Promise((r) => setTimeout(r, 200));
    }
    expect(row?.status).toBe('sent');
    expect(row?.attempts).toBe(2); // the crashed try counts, then one delivery
    const lease = (await db()('job_lease').where({ name: 'mail' }).first())!;
    const holders = [a, b].filter((p) => String(lease.holder).includes(`:${p.child.pid}:`));
    expect(holders).toHaveLength(1);
    expect(new Date(lease.expires_at).getTime()).toBeGreaterThan(Date.now());
  }, 60_000);

  it('takes up only rows whose claim is older than the timeout (a server still sending keeps its row)', async () => {
    const now = Date.now();
    const [fresh] = await db()('mail_outbox').insert({
      to_address: 'still-sending@test.example',
      subject: 'a live server is sending this',
      body: 'x',
      status: 'sending',
      attempts: 0,
      created_at: new Date(now),
      next_attempt_at: new Date(now),
      claimed_at: new Date(now),
      claimed_by: 'live-host:1:abcdef',
    });
    await requeueStale(db(), 300_000);
    expect((await db()('mail_outbox').where({ id: fresh }).first())!.status).toBe('sending');
    await requeueStale(db(), 0);
    const after = (await db()('mail_outbox').where({ id: fresh }).first())!;
    expect(after.status).toBe('queued');
    expect(after.claimed_by).toBeNull();
    expect(after.last_error).toMatch(/taken up again/);
  });
});
