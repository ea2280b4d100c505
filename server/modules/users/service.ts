/** Account rules: admins create, edit roles of, deactivate, unlock and reset accounts; nothing is deleted. */
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import { badRequest, conflict, notFound } from '../../lib/errors';
import { hashPassword, passwordProblem } from '../../lib/passwords';
import { invalidateUserSessions } from '../../lib/sessions';
import type { Role } from '../../lib/contract';
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
  const p = passwordProblem(input.temporaryPassword, input.username);
  if (p) throw badRequest(p);
  if (await repo.findByUsername(db, input.username))
    throw conflict(`The user name "${input.username}" is already taken.`);
  const hash = await hashPassword(input.temporaryPassword);
  return db.transaction(async (trx) => {
    const now = new Date();
    const id = await repo.insertUser(trx, {
      username: input.username,
      full_name: input.fullName,
      email: input.email,
      password_hash: hash,
      roles: JSON.stringify(input.roles),
      must_change_password: 1,
      failed_attempts: 0,
      locked_until: null,
      active: 1,
      password_changed_at: null,
      created_at: now,
      updated_at: now,
    });
    const u = (await repo.findById(trx, id))!;
    const pub = repo.toPublicUser(u);
    await appendAudit(trx, { actor, action: 'user.created', entityType: 'user', entityId: id, after: pub, ip });
    return pub;
  });
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
  return db.transaction(async (trx) => {
    const before = await trx('app_user').where({ id }).forUpdate().first();
    if (!before) throw notFound('The account');
    if (actor.id === id && patch.active === false) throw badRequest('You cannot deactivate your own account.');
    if (actor.id === id && patch.roles && !patch.roles.includes('admin'))
      throw badRequest('You cannot remove your own administrator role.');
    const upd: Partial<repo.UserRow> = {};
    if (patch.fullName !== undefined) upd.full_name = patch.fullName;
    if (patch.email !== undefined) upd.email = patch.email;
    if (patch.roles !== undefined) upd.roles = JSON.stringify(patch.roles);
    if (patch.active !== undefined) upd.active = patch.active ? 1 : 0;
    await repo.updateUser(trx, id, upd);
    if (patch.active === false || patch.roles) await invalidateUserSessions(trx, id);
    const after = (await repo.findById(trx, id))!;
    const action =
      patch.active === false
        ? 'user.deactivated'
        : patch.active === true && !before.active
          ? 'user.reactivated'
          : patch.roles
            ? 'user.roles-changed'
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
    return repo.toPublicUser(after);
  });
}

export async function unlockUser(
  db: Knex,
  actor: Actor,
  id: number,
  reason: string,
  ip: string | null,
): Promise<UserAccount> {
  return db.transaction(async (trx) => {
    const before = await trx('app_user').where({ id }).forUpdate().first();
    if (!before) throw notFound('The account');
    await repo.updateUser(trx, id, { failed_attempts: 0, locked_until: null });
    const after = (await repo.findById(trx, id))!;
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
  const p = passwordProblem(temporaryPassword, target.username);
  if (p) throw badRequest(p);
  const hash = await hashPassword(temporaryPassword);
  return db.transaction(async (trx) => {
    await repo.updateUser(trx, id, {
      password_hash: hash,
      must_change_password: 1,
      failed_attempts: 0,
      locked_until: null,
    });
    await invalidateUserSessions(trx, id);
    const after = (await repo.findById(trx, id))!;
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
