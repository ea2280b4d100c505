/**
 * Account rules: admins create, edit, deactivate, unlock and reset accounts; nothing is deleted.
 * Roles change through role grants (./grants.ts): nobody changes their own roles or status, and
 * QA manager, verifier and administrator need a second administrator's confirmation.
 */
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import { badRequest, conflict, notFound } from '../../lib/errors';
import { transactionWithRetry } from '../../lib/retry';
import { must } from '../../lib/db';
import type { AppUserInsert } from '../../lib/db-tables';
import {
  hashPassword,
  isRecentPassword,
  PASSWORD_HISTORY,
  passwordProblem,
  rememberPassword,
} from '../../lib/passwords';
import { invalidateUserSessions } from '../../lib/sessions';
import { canonicalRoles, type Role } from '../../lib/contract';
import { assertNotSelfStatus, assertRolesAllowed, changeRoles, splitChange } from './grants';
import type { UserAccount } from './contract';
import * as repo from './repo';

export interface NewUser {
  username: string;
  fullName: string;
  email: string;
  roles: Role[];
  temporaryPassword: string;
}

export async function createUser(db: Knex, actor: Actor, input: NewUser, ip: string | null): Promise<UserAccount> {
  assertRolesAllowed(input.roles);
  const p = await passwordProblem(input.temporaryPassword, {
    username: input.username,
    fullName: input.fullName,
    email: input.email,
  });
  if (p) throw badRequest(p);
  if (await repo.findByUsername(db, input.username))
    throw conflict(`The user name "${input.username}" is already taken.`);
  const hash = await hashPassword(input.temporaryPassword);
  const id = await transactionWithRetry(db, async (trx) => {
    const now = new Date();
    // An account is created without roles; its roles come from role grants (docs/access.md).
    const id = await repo.insertUser(trx, {
      username: input.username,
      full_name: input.fullName,
      email: input.email,
      password_hash: hash,
      roles: '[]',
      must_change_password: 1,
      failed_attempts: 0,
      locked_until: null,
      active: 1,
      password_changed_at: null,
      created_at: now,
      updated_at: now,
    });
    // The roles that need no confirmation are granted at once and recorded in user.created; the
    // rest becomes a request for a second administrator, audited after it.
    await rememberPassword(trx, id, hash);
    const split = splitChange([], input.roles);
    const needsConfirmation = split.confirm.length !== split.now.length;
    await changeRoles(
      trx,
      actor,
      must(await repo.findById(trx, id), `Account ${id}`),
      input.roles,
      'roles of the new account',
      ip,
      {
        auditDirect: false,
        afterDirect: async () => {
          const u = must(await repo.findById(trx, id), `Account ${id}`);
          await appendAudit(trx, {
            actor,
            action: 'user.created',
            entityType: 'user',
            entityId: id,
            after: {
              ...repo.toPublicUser(u),
              ...(needsConfirmation ? { rolesAwaitingConfirmation: canonicalRoles(input.roles) } : {}),
            },
            ip,
          });
        },
      },
    );
    return id;
  });
  const [pending] = await repo.pendingRoleChanges(db, id);
  return repo.toPublicUser(must(await repo.findById(db, id), `Account ${id}`), pending ?? null);
}

export interface UserPatch {
  fullName?: string;
  email?: string;
  roles?: Role[];
  active?: boolean;
  reason: string;
}

export async function updateUser(
  db: Knex,
  actor: Actor,
  id: number,
  patch: UserPatch,
  ip: string | null,
): Promise<UserAccount> {
  assertNotSelfStatus(actor, id, patch);
  if (patch.roles) assertRolesAllowed(patch.roles);
  await transactionWithRetry(db, async (trx) => {
    const before = await trx('app_user').where({ id }).forUpdate().first();
    if (!before) throw notFound('The account');
    const upd: Partial<AppUserInsert> = {};
    if (patch.fullName !== undefined) upd.full_name = patch.fullName;
    if (patch.email !== undefined) upd.email = patch.email;
    if (patch.active !== undefined) upd.active = patch.active ? 1 : 0;
    if (Object.keys(upd).length) {
      await repo.updateUser(trx, id, upd);
      if (patch.active === false) await invalidateUserSessions(trx, id);
      const after = must(await repo.findById(trx, id), `Account ${id}`);
      const action =
        patch.active === false
          ? 'user.deactivated'
          : patch.active === true && !before.active
            ? 'user.reactivated'
            : 'user.updated';
      await appendAudit(trx, {
        actor,
        action,
        entityType: 'user',
        entityId: id,
        before: repo.toPublicUser(before),
        after: repo.toPublicUser(after),
        reason: patch.reason,
        ip,
      });
    }
    if (patch.roles)
      await changeRoles(trx, actor, must(await repo.findById(trx, id), `Account ${id}`), patch.roles, patch.reason, ip);
  });
  const [pending] = await repo.pendingRoleChanges(db, id);
  return repo.toPublicUser(must(await repo.findById(db, id), `Account ${id}`), pending ?? null);
}

export async function unlockUser(
  db: Knex,
  actor: Actor,
  id: number,
  reason: string,
  ip: string | null,
): Promise<UserAccount> {
  return transactionWithRetry(db, async (trx) => {
    const before = await trx('app_user').where({ id }).forUpdate().first();
    if (!before) throw notFound('The account');
    await repo.updateUser(trx, id, { failed_attempts: 0, locked_until: null });
    const after = must(await repo.findById(trx, id), `Account ${id}`);
    await appendAudit(trx, {
      actor,
      action: 'user.unlocked',
      entityType: 'user',
      entityId: id,
      before: repo.toPublicUser(before),
      after: repo.toPublicUser(after),
      reason,
      ip,
    });
    return repo.toPublicUser(after);
  });
}

export async function resetPassword(
  db: Knex,
  actor: Actor,
  id: number,
  temporaryPassword: string,
  reason: string,
  ip: string | null,
): Promise<UserAccount> {
  const target = await repo.findById(db, id);
  if (!target) throw notFound('The account');
  const p = await passwordProblem(temporaryPassword, {
    username: target.username,
    fullName: target.full_name,
    email: target.email,
  });
  if (p) throw badRequest(p);
  if (await isRecentPassword(db, target, temporaryPassword))
    throw badRequest(
      `The temporary password must differ from the account's last ${PASSWORD_HISTORY} passwords. Choose another one.`,
    );
  const hash = await hashPassword(temporaryPassword);
  return transactionWithRetry(db, async (trx) => {
    await repo.updateUser(trx, id, {
      password_hash: hash,
      must_change_password: 1,
      failed_attempts: 0,
      locked_until: null,
    });
    await rememberPassword(trx, id, hash);
    await invalidateUserSessions(trx, id);
    const after = must(await repo.findById(trx, id), `Account ${id}`);
    await appendAudit(trx, {
      actor,
      action: 'user.password-reset',
      entityType: 'user',
      entityId: id,
      after: { mustChangePassword: true },
      reason,
      ip,
    });
    return repo.toPublicUser(after);
  });
}
