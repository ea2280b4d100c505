/**
 * Sign-in rules: Argon2id check, lock-out after repeated failures (counted together with failed
 * e-signatures and password changes, server/lib/lockout.ts), forced password change. An unknown,
 * deactivated or locked account and a wrong password all get the same answer - same status, same
 * body - after the same work (one Argon2id verification and one audit transaction), so the answer
 * does not tell whether an account exists or is locked.
 */
import { transactionWithRetry } from '../../lib/retry';
import type { Knex } from 'knex';
import { appendAudit, auditNow } from '../../lib/audit';
import type { AppConfig } from '../../lib/config';
import { AppError, badRequest } from '../../lib/errors';
import { clearCredentialFailures, isLocked, lockoutPolicy, recordCredentialFailure } from '../../lib/lockout';
import {
  DUMMY_HASH,
  hashPassword,
  isRecentPassword,
  PASSWORD_HISTORY,
  passwordProblem,
  rememberPassword,
  verifyPassword,
} from '../../lib/passwords';
import { createSession, invalidateSession, invalidateUserSessions } from '../../lib/sessions';
import * as users from '../users';
import type { AuthUser } from '../../lib/http';

export function signInFailed(): AppError {
  const p = lockoutPolicy();
  return new AppError(
    401,
    'SIGN_IN_FAILED',
    `The user name or password is not correct, or the account is locked. After ${p.attempts} failed attempts an account is locked for ${p.minutes} minutes; an administrator can unlock it sooner.`,
  );
}

export async function signIn(db: Knex, cfg: AppConfig, username: string, password: string, ip: string | null) {
  const u = await users.findByUsername(db, username);
  if (!u || !u.active || isLocked(u)) {
    // Same work and same answer whether the account is unknown, deactivated or locked.
    await verifyPassword(DUMMY_HASH, password);
    await auditNow(db, {
      actor: u ? { id: u.id, name: u.full_name } : { id: null, name: username },
      action: u && u.active ? 'auth.sign-in-refused-locked' : 'auth.sign-in-failed',
      entityType: 'user',
      entityId: u?.id ?? null,
      ...(u && u.active ? { after: { lockedUntil: new Date(u.locked_until!).toISOString() } } : {}),
      reason: !u ? 'unknown user name' : !u.active ? 'account deactivated' : 'account locked',
      ip,
    });
    throw signInFailed();
  }
  const ok = await verifyPassword(u.password_hash, password);
  if (!ok) {
    await recordCredentialFailure(db, { userId: u.id, check: 'sign-in', reason: 'wrong password', ip });
    throw signInFailed();
  }
  return transactionWithRetry(db, async (trx) => {
    await users.updateUser(trx, u.id, { failed_attempts: 0, locked_until: null });
    // Periodic revision of passwords (21 CFR 11.300(b)): past the maximum age the password must be changed now.
    const changedAt = new Date(u.password_changed_at ?? u.created_at).getTime();
    if (
      cfg.passwordMaxAgeDays > 0 &&
      !u.must_change_password &&
      Date.now() - changedAt > cfg.passwordMaxAgeDays * 86_400_000
    ) {
      await users.updateUser(trx, u.id, { must_change_password: 1 });
      await appendAudit(trx, {
        actor: { id: u.id, name: u.full_name },
        action: 'auth.password-expired',
        entityType: 'user',
        entityId: u.id,
        reason: `password older than ${cfg.passwordMaxAgeDays} days`,
        ip,
      });
    }
    const session = await createSession(trx, u.id, cfg.sessionMaxHours, ip);
    await appendAudit(trx, {
      actor: { id: u.id, name: u.full_name },
      action: 'auth.signed-in',
      entityType: 'user',
      entityId: u.id,
      ip,
    });
    return { token: session.token, user: users.toPublicUser((await users.findById(trx, u.id))!) };
  });
}

export async function signOut(db: Knex, user: AuthUser, ip: string | null): Promise<void> {
  await transactionWithRetry(db, async (trx) => {
    await invalidateSession(trx, user.sessionId);
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'auth.signed-out',
      entityType: 'user',
      entityId: user.id,
      ip,
    });
  });
}

export async function changePassword(
  db: Knex,
  cfg: AppConfig,
  user: AuthUser,
  current: string,
  next: string,
  ip: string | null,
): Promise<void> {
  const u = (await users.findById(db, user.id))!;
  if (isLocked(u))
    throw new AppError(
      423,
      'ACCOUNT_LOCKED',
      'Your account is locked after repeated wrong passwords. Wait until the lock ends or ask an administrator to unlock it.',
    );
  if (!(await verifyPassword(u.password_hash, current))) {
    const { locked } = await recordCredentialFailure(db, {
      userId: u.id,
      check: 'password-change',
      reason: 'current password wrong',
      ip,
    });
    throw new AppError(
      401,
      'WRONG_PASSWORD',
      locked
        ? `Your current password is not correct. After ${cfg.lockoutAttempts} wrong passwords the account is locked and you are signed out; an administrator can unlock it.`
        : 'Your current password is not correct.',
    );
  }
  await clearCredentialFailures(db, u);
  const p = await passwordProblem(next, { username: u.username, fullName: u.full_name, email: u.email });
  if (p) throw badRequest(p);
  if (await isRecentPassword(db, u, next))
    throw badRequest(
      `The new password must differ from your last ${PASSWORD_HISTORY} passwords (the current one included). Choose one you have not used here before.`,
    );
  const hash = await hashPassword(next);
  await transactionWithRetry(db, async (trx) => {
    await users.updateUser(trx, u.id, {
      password_hash: hash,
      must_change_password: 0,
      password_changed_at: new Date(),
    });
    await rememberPassword(trx, u.id, hash);
    // Other sessions of this account end; this one continues.
    await trx('user_session').where({ user_id: u.id }).whereNot({ id: user.sessionId }).delete();
    await appendAudit(trx, {
      actor: { id: u.id, name: u.full_name },
      action: 'auth.password-changed',
      entityType: 'user',
      entityId: u.id,
      ip,
    });
  });
}

export { invalidateUserSessions };
