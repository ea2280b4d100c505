/**
 * Background jobs run once per site: two "processes" (two holders) compete for one lease row in the
 * real MariaDB; exactly one wins, the other waits until the lease expires or is handed back.
 * Transactions that lose a deadlock are retried whole.
 */
import { afterAll, describe, expect, it } from 'vitest';
import { acquireLease, releaseLease, startJob } from '../../server/lib/lease';
import { isRetryableTxError, transactionWithRetry } from '../../server/lib/retry';
import { db, uniqueName } from './helpers';

afterAll(async () => {
  await db()('job_lease')
    .where('name', 'like', 'test-%')
    .update({ expires_at: new Date(0) });
});

describe('job leases', () => {
  it('lets exactly one of several concurrent holders take a free lease', async () => {
    const name = `test-${uniqueName('a')}`;
    const holders = ['host-a:1', 'host-b:2', 'host-c:3', 'host-d:4', 'host-e:5'];
    const won = await Promise.all(holders.map((h) => acquireLease(db(), name, 60_000, h)));
    expect(won.filter(Boolean)).toHaveLength(1);
    const winner = holders[won.indexOf(true)];
    // The holder renews; the others still cannot take it.
    expect(await acquireLease(db(), name, 60_000, winner)).toBe(true);
    for (const h of holders.filter((x) => x !== winner)) expect(await acquireLease(db(), name, 60_000, h)).toBe(false);
  });

  it('passes an expired lease to the next process, and a released one at once', async () => {
    const name = `test-${uniqueName('b')}`;
    expect(await acquireLease(db(), name, 40, 'dead-process:1')).toBe(true);
    expect(await acquireLease(db(), name, 60_000, 'live-process:2')).toBe(false);
    await new Promise((r) => setTimeout(r, 80));
    expect(await acquireLease(db(), name, 60_000, 'live-process:2')).toBe(true);
    await releaseLease(db(), name, 'live-process:2');
    expect(await acquireLease(db(), name, 60_000, 'third-process:3')).toBe(true);
  });

  it('runs a job only on the lease holder and records its last run', async () => {
    const name = `test-${uniqueName('c')}`;
    await acquireLease(db(), name, 60_000, 'another-server:9');
    let runs = 0;
    const job = startJob(db(), { name, intervalMs: 3_600_000, run: async () => void runs++ });
    expect(await job.tick()).toBe(false);
    expect(runs).toBe(0);
    await releaseLease(db(), name, 'another-server:9');
    expect(await job.tick()).toBe(true);
    expect(runs).toBe(1);
    const row = await db()('job_lease').where({ name }).first();
    expect(row!.last_ok_at).not.toBeNull();
    await job.stop();
  });
});

describe('transaction retry', () => {
  it('treats deadlocks, lock wait timeouts and Galera not-ready as retryable, and nothing else', () => {
    expect(isRetryableTxError({ errno: 1213, code: 'ER_LOCK_DEADLOCK' })).toBe(true);
    expect(isRetryableTxError({ errno: 1205 })).toBe(true);
    expect(isRetryableTxError({ errno: 1047 })).toBe(true);
    expect(isRetryableTxError({ errno: 1062, code: 'ER_DUP_ENTRY' })).toBe(false);
    expect(isRetryableTxError(new Error('boom'))).toBe(false);
  });

  it('runs the whole unit again after a real deadlock between two transactions', async () => {
    const a = `test-${uniqueName('d')}`;
    const b = `test-${uniqueName('e')}`;
    const now = new Date();
    await db()('job_lease').insert([
      { name: a, holder: 'x', expires_at: now, acquired_at: now },
      { name: b, holder: 'x', expires_at: now, acquired_at: now },
    ]);
    let tries = 0;
    // Two units lock the same two rows in opposite order; MariaDB kills one with 1213, which is retried.
    const unit = (first: string, second: string) =>
      transactionWithRetry(db(), async (trx) => {
        tries++;
        await trx('job_lease').where({ name: first }).forUpdate().first();
        await new Promise((r) => setTimeout(r, 150));
        await trx('job_lease').where({ name: second }).update({ holder: first });
      });
    await Promise.all([unit(a, b), unit(b, a)]);
    expect(tries).toBeGreaterThanOrEqual(3);
  });
});
