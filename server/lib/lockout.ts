/**
 * One lock-out for every place a password is checked: sign-in, e-signature and the current
 * password of a password change (21 CFR 11.300(d); docs/compliance.md, "Authentication").
 * Consecutive failures are counted on the account row, whatever the place; at the limit the
 * account is locked for a while, the lock is audited and mailed to the administrators at once.
 * A lock reached through a signature or a password change (a person at a signed-in terminal who
 * does not know the password) also ends every session of the account.
 */
import { transactionWithRetry } from './retry';
import type { Knex } from 'knex';
import { appendAudit } from './audit';
import { enqueueMailToRole } from './mail';
import { invalidateUserSessions } from './sessions';
import { must } from './db';

export interface LockoutPolicy {
  /** consecutive failures that lock the account */
  attempts: number;
  /** how long the lock lasts */
  minutes: number;
}

let policy: LockoutPolicy = { attempts: 5, minutes: 15 };

/** Set once by createApp from the configuration (LOCKOUT_ATTEMPTS, LOCKOUT_MINUTES). */
export function setLockoutPolicy(p: LockoutPolicy): void {
  policy = { ...p };
}

export function lockoutPolicy(): LockoutPolicy {
  return policy;
}

export type CredentialCheck = 'sign-in' | 'signature' | 'password-change';

const FAILED_ACTION: Record<CredentialCheck, string> = {
  'sign-in': 'auth.sign-in-failed',
  signature: 'signature.refused',
  'password-change': 'auth.password-change-refused',
};

const WHERE: Record<CredentialCheck, string> = {
  'sign-in': 'sign-ins',
  signature: 'password entries',
  'password-change': 'password entries',
};

export function isLocked(u: { locked_until?: Date | string | null }): boolean {
  return !!u.locked_until && new Date(u.locked_until).getTime() > Date.now();
}

export interface FailureInput {
  userId: number;
  check: CredentialCheck;
  ip: string | null;
  /** the audit event's record and extra values (a refused signature names the record it was for) */
  entityType?: string;
  entityId?: string | number | null;
  after?: Record<string, unknown>;
  reason: string;
}

/**
 * Counts one failed password check of an existing account, in its own transaction (the refusal is
 * kept even though the caller's action fails). Returns whether this failure locked the account.
 */
export async function recordCredentialFailure(
  db: Knex,
  f: FailureInput,
): Promise<{ locked: boolean; attempts: number }> {
  return transactionWithRetry(db, async (trx) => {
    // the caller has just read this account to check its password
    const row = must(await trx('app_user').where({ id: f.userId }).forUpdate().first(), `Account ${f.userId}`);
    const attempts = row.failed_attempts + 1;
    const lock = attempts >= policy.attempts;
    const lockedUntil = lock ? new Date(Date.now() + policy.minutes * 60_000) : null;
    await trx('app_user')
      .where({ id: f.userId })
      .update({ failed_attempts: lock ? 0 : attempts, locked_until: lockedUntil, updated_at: new Date() });
    const actor = { id: row.id, name: row.full_name };
    await appendAudit(trx, {
      actor,
      action: FAILED_ACTION[f.check],
      entityType: f.entityType ?? 'user',
      entityId: f.entityId ?? f.userId,
      after: { ...(f.after ?? {}), consecutiveFailures: attempts },
      reason: f.reason,
      ip: f.ip,
    });
    if (lock) {
      const endsSessions = f.check !== 'sign-in';
      if (endsSessions) await invalidateUserSessions(trx, f.userId);
      await appendAudit(trx, {
        actor,
        action: 'auth.locked',
        entityType: 'user',
        entityId: f.userId,
        after: { lockedUntil: lockedUntil!.toISOString(), after: f.check, sessionsEnded: endsSessions },
        reason: `${attempts} consecutive failed ${WHERE[f.check]}`,
        ip: f.ip,
      });
      // Possible unauthorised use is reported at once to the administrators (21 CFR 11.300(d)).
      await enqueueMailToRole(
        trx,
        'admin',
        `Account locked: ${row.username}`,
        `The account ${row.username} (${row.full_name}) was locked at ${new Date().toISOString()} UTC after ${attempts} consecutive failed ${WHERE[f.check]}` +
          ` (the last one ${f.check === 'sign-in' ? 'at sign-in' : f.check === 'signature' ? 'in an e-signature' : 'in a password change'})` +
          `${f.ip ? ` from ${f.ip}` : ''}.${endsSessions ? ' Its open sessions were ended.' : ''} It unlocks by itself at ${lockedUntil!.toISOString()} UTC, or an administrator can unlock it after checking with the person.`,
      );
    }
    return { locked: lock, attempts };
  });
}

/** A correct password ends a run of failures (only writes when there was one). */
export async function clearCredentialFailures(
  db: Knex | Knex.Transaction,
  user: { id: number; failed_attempts?: number },
) {
  if (!user.failed_attempts) return;
  await db('app_user').where({ id: user.id }).update({ failed_attempts: 0, updated_at: new Date() });
}
