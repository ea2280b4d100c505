/** Sign-in rules: Argon2id check, lockout after repeated failures, forced password change. */
import type { Knex } from 'knex';
import { appendAudit, auditNow } from '../../lib/audit';
import { enqueueMailToRole } from '../../lib/mail';
import type { AppConfig } from '../../lib/config';
import { AppError, badRequest } from '../../lib/errors';
import { hashPassword, passwordProblem, verifyPassword } from '../../lib/passwords';
import { createSession, invalidateSession, invalidateUserSessions } from '../../lib/sessions';
import * as users from '../users/repo';
import type { AuthUser } from '../../lib/http';

const GENERIC = 'The user name or password is not correct.';

export async function signIn(db: Knex, cfg: AppConfig, username: string, password: string, ip: string | null) {
  const u = await users.findByUsername(db, username);
  if (!u || !u.active) {
    // Same work and same answer whether or not the account exists.
    await verifyPassword(
      '$argon2id$v=19$m=19456,t=2,p=1$c29tZXNhbHRzb21lc2FsdA$Zm9vYmFyZm9vYmFyZm9vYmFyZm9vYmFyZm9vYmE',
      password,
    );
    await auditNow(db, {
      actor: { id: null, name: username },
      action: 'auth.sign-in-failed',
      entityType: 'user',
      entityId: u?.id ?? null,
      reason: u ? 'account deactivated' : 'unknown user name',
      ip,
    });
    throw new AppError(401, 'SIGN_IN_FAILED', GENERIC);
  }
  if (u.locked_until && new Date(u.locked_until).getTime() > Date.now()) {
    await auditNow(db, {
      actor: { id: u.id, name: u.full_name },
      action: 'auth.sign-in-refused-locked',
      entityType: 'user',
      entityId: u.id,
      ip,
    });
    throw new AppError(
      423,
      'ACCOUNT_LOCKED',
      `This account is locked after ${cfg.lockoutAttempts} failed sign-ins. Try again after ${new Date(u.locked_until).toISOString().slice(11, 16)} UTC or ask an administrator to unlock it.`,
      { lockedUntil: new Date(u.locked_until).toISOString() },
    );
  }
  const ok = await verifyPassword(u.password_hash, password);
  if (!ok) {
    await db.transaction(async (trx) => {
      const row = await trx('app_user').where({ id: u.id }).forUpdate().first();
      const attempts = row.failed_attempts + 1;
      const lock = attempts >= cfg.lockoutAttempts;
      const lockedUntil = lock ? new Date(Date.now() + cfg.lockoutMinutes * 60_000) : null;
      await users.updateUser(trx, u.id, { failed_attempts: lock ? 0 : attempts, locked_until: lockedUntil });
      await appendAudit(trx, {
        actor: { id: u.id, name: u.full_name },
        action: 'auth.sign-in-failed',
        entityType: 'user',
        entityId: u.id,
        after: { consecutiveFailures: attempts },
        reason: 'wrong password',
        ip,
      });
      if (lock) {
        await appendAudit(trx, {
          actor: { id: u.id, name: u.full_name },
          action: 'auth.locked',
          entityType: 'user',
          entityId: u.id,
          after: { lockedUntil: lockedUntil!.toISOString() },
          reason: `${attempts} consecutive failed sign-ins`,
          ip,
        });
        // Possible unauthorised use is reported at once to the administrators (21 CFR 11.300(d)).
        await enqueueMailToRole(
          trx,
          'admin',
          `Account locked: ${u.username}`,
          `The account ${u.username} (${u.full_name}) was locked at ${new Date().toISOString()} UTC after ${attempts} consecutive failed sign-ins` +
            `${ip ? ` from ${ip}` : ''}. It unlocks by itself at ${lockedUntil!.toISOString()} UTC, or an administrator can unlock it after checking with the person.`,
        );
      }
    });
    throw new AppError(401, 'SIGN_IN_FAILED', GENERIC);
  }
  return db.transaction(async (trx) => {
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
  await db.transaction(async (trx) => {
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
  user: AuthUser,
  current: string,
  next: string,
  ip: string | null,
): Promise<void> {
  const u = (await users.findById(db, user.id))!;
  if (!(await verifyPassword(u.password_hash, current))) {
    await auditNow(db, {
      actor: { id: u.id, name: u.full_name },
      action: 'auth.password-change-refused',
      entityType: 'user',
      entityId: u.id,
      reason: 'current password wrong',
      ip,
    });
    throw new AppError(401, 'WRONG_PASSWORD', 'Your current password is not correct.');
  }
  const p = passwordProblem(next, u.username);
  if (p) throw badRequest(p);
  if (await verifyPassword(u.password_hash, next))
    throw badRequest('The new password must differ from the current one.');
  const hash = await hashPassword(next);
  await db.transaction(async (trx) => {
    await users.updateUser(trx, u.id, {
      password_hash: hash,
      must_change_password: 0,
      password_changed_at: new Date(),
    });
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
