/**
 * Background jobs that run once per site, whatever the number of app servers (docs/architecture.md,
 * "Background jobs"): every process starts the same job loop, and on each tick it tries to take or
 * renew the job's lease row in MariaDB; only the holder of a current lease runs the job.
 * (MariaDB applies the ON DUPLICATE KEY assignments left to right, each seeing the ones before it:
 * `expires_at` is decided after `holder`, so it is renewed exactly when this process holds the lease.) A process
 * that dies simply stops renewing, and another takes over when the lease expires. Lease rows are
 * changed by single-row updates (no table locks or GET_LOCK, which Galera does not replicate).
 */
import crypto from 'node:crypto';
import os from 'node:os';
import type { Knex } from 'knex';
import { childLog, safeError } from './log';

const jobLog = childLog('job');

/** This process's identity in lease rows. */
export const PROCESS_ID = `${os.hostname()}:${process.pid}:${crypto.randomBytes(3).toString('hex')}`;

/**
 * Takes the lease `name` for `ttlMs` if it is free, expired or already ours. Returns true when this
 * process holds it afterwards. One statement decides, so two processes can never both win.
 */
export async function acquireLease(db: Knex, name: string, ttlMs: number, holder = PROCESS_ID): Promise<boolean> {
  const now = new Date();
  const until = new Date(now.getTime() + ttlMs);
  await db.raw(
    `INSERT INTO job_lease (name, holder, expires_at, acquired_at) VALUES (?, ?, ?, ?)
     ON DUPLICATE KEY UPDATE
       acquired_at = IF(holder = VALUES(holder), acquired_at, IF(expires_at < VALUES(acquired_at), VALUES(acquired_at), acquired_at)),
       holder = IF(holder = VALUES(holder) OR expires_at < VALUES(acquired_at), VALUES(holder), holder),
       expires_at = IF(holder = VALUES(holder), VALUES(expires_at), expires_at)`,
    [name, holder, until, now],
  );
  const row = await db('job_lease').where({ name }).first('holder');
  return row?.holder === holder;
}

/** Gives the lease up at once (graceful shutdown), if this process holds it. */
export async function releaseLease(db: Knex, name: string, holder = PROCESS_ID): Promise<void> {
  await db('job_lease')
    .where({ name, holder })
    .update({ expires_at: new Date(0) });
}

export interface JobSpec {
  /** Lease name, one per job and site, e.g. 'mail', 'integrity-sweep'. */
  name: string;
  /** Time between runs on the holder. */
  intervalMs: number;
  /** The work; it should finish well within the lease time (default three intervals, at least 30 s). */
  run: (db: Knex) => Promise<unknown>;
  leaseMs?: number;
}

export interface RunningJob {
  name: string;
  /** Runs once now if this process can hold the lease (tests and manual triggers). */
  tick(): Promise<boolean>;
  stop(): Promise<void>;
}

const running = new Map<string, RunningJob>();

/** Starts the job loop in this process (idempotent per job name). */
export function startJob(db: Knex, spec: JobSpec): RunningJob {
  const existing = running.get(spec.name);
  if (existing) return existing;
  const leaseMs = spec.leaseMs ?? Math.max(30_000, spec.intervalMs * 3);
  let busy: Promise<boolean> | null = null;
  let stopped = false;

  const once = async (): Promise<boolean> => {
    if (stopped) return false;
    if (!(await acquireLease(db, spec.name, leaseMs))) return false;
    const started = new Date();
    try {
      await spec.run(db);
      await db('job_lease')
        .where({ name: spec.name, holder: PROCESS_ID })
        .update({ last_run_at: started, last_ok_at: new Date(), last_error: null });
    } catch (e) {
      const message = String((e as Error)?.message ?? e).slice(0, 2000);
      await db('job_lease')
        .where({ name: spec.name, holder: PROCESS_ID })
        .update({ last_run_at: started, last_error: message })
        .catch(() => undefined);
      jobLog.error({ job: spec.name, err: safeError(e) }, 'job run failed');
    }
    return true;
  };
  const tick = (): Promise<boolean> => {
    if (!busy)
      busy = once()
        .catch((e) => {
          jobLog.error({ job: spec.name, err: safeError(e) }, 'lease could not be taken');
          return false;
        })
        .finally(() => (busy = null));
    return busy;
  };
  const timer = setInterval(() => void tick(), spec.intervalMs);
  timer.unref();
  const job: RunningJob = {
    name: spec.name,
    tick,
    async stop() {
      stopped = true;
      clearInterval(timer);
      running.delete(spec.name);
      if (busy) await busy;
      await releaseLease(db, spec.name).catch(() => undefined);
    },
  };
  running.set(spec.name, job);
  return job;
}

/** Stops every job of this process and hands their leases back (graceful shutdown). */
export async function stopAllJobs(): Promise<void> {
  await Promise.all([...running.values()].map((j) => j.stop()));
}
