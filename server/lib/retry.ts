/**
 * Transactions retried whole when MariaDB gives up on them for a reason that a second try can
 * cure: a deadlock (1213, which is also how a Galera node reports a lost certification conflict),
 * a lock wait timeout (1205), or Galera's "WSREP has not yet prepared node for application use"
 * (1047) while a node rejoins. The unit of work must be idempotent as a whole: everything it does
 * happens inside the transaction, and nothing outside it (no mail, no PDF, no network call) runs
 * before it commits.
 */
import type { Knex } from 'knex';

const RETRYABLE_ERRNO = new Set([1213, 1205, 1047]);
const RETRYABLE_CODES = new Set(['ER_LOCK_DEADLOCK', 'ER_LOCK_WAIT_TIMEOUT', 'ER_UNKNOWN_COM_ERROR']);

/** True for errors after which the whole transaction may simply run again. */
export function isRetryableTxError(e: unknown): boolean {
  const err = e as { errno?: number; code?: string } | null;
  if (!err) return false;
  return (err.errno !== undefined && RETRYABLE_ERRNO.has(err.errno)) || (!!err.code && RETRYABLE_CODES.has(err.code));
}

export interface RetryOptions {
  /** Tries in all (default 6). */
  attempts?: number;
  /** First back-off in ms, doubled per try with jitter (default 15). */
  baseDelayMs?: number;
}

/** Runs `work` in a transaction, again from the start after a retryable failure. */
export async function transactionWithRetry<T>(
  db: Knex,
  work: (trx: Knex.Transaction) => Promise<T>,
  opts: RetryOptions = {},
): Promise<T> {
  const attempts = opts.attempts ?? 6;
  const base = opts.baseDelayMs ?? 15;
  for (let i = 1; ; i++) {
    try {
      return await db.transaction(work);
    } catch (e) {
      if (i >= attempts || !isRetryableTxError(e)) throw e;
      const delay = base * 2 ** (i - 1) * (0.5 + Math.random());
      await new Promise((r) => setTimeout(r, delay));
    }
  }
}
