/** Data access for accounts. */
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import type { Role } from '../../lib/contract';
import type { AppUserInsert, AppUserRow, RoleRequestRow } from '../../lib/db-tables';
import type { PendingRoleChange, UserAccount } from './contract';

export function toPublicUser(u: AppUserRow, pending?: PendingRoleChange | null): UserAccount {
  return {
    id: u.id,
    username: u.username,
    fullName: u.full_name,
    email: u.email,
    roles: parseJson<Role[]>(u.roles, []),
    mustChangePassword: !!u.must_change_password,
    active: !!u.active,
    lockedUntil:
      u.locked_until && new Date(u.locked_until).getTime() > Date.now() ? new Date(u.locked_until).toISOString() : null,
    failedAttempts: u.failed_attempts,
    createdAt: new Date(u.created_at).toISOString(),
    ...(pending !== undefined ? { pendingRoleChange: pending } : {}),
  };
}

/** Role requests without a decision, by account (oldest first). */
export async function pendingRoleChanges(db: Db, userId?: number): Promise<PendingRoleChange[]> {
  const q = db('role_request as r')
    .leftJoin('role_decision as d', 'd.request_id', 'r.id')
    .join('app_user as a', 'a.id', 'r.requested_by')
    .whereNull('d.id')
    .select<(RoleRequestRow & { requested_by_name: string })[]>('r.*', 'a.full_name as requested_by_name')
    .orderBy('r.id');
  if (userId !== undefined) q.where('r.user_id', userId);
  const rows = await q;
  return rows.map((r) => ({
    requestId: r.id,
    userId: r.user_id,
    rolesBefore: parseJson<Role[]>(r.roles_before, []),
    rolesAfter: parseJson<Role[]>(r.roles_after, []),
    requestedBy: r.requested_by,
    requestedByName: r.requested_by_name,
    requestedAt: new Date(r.requested_at).toISOString(),
    reason: r.reason,
  }));
}

/** Accounts with the pending role change of each (the administrator's view). */
export async function listUsersWithPending(db: Db): Promise<UserAccount[]> {
  const pending = new Map<number, PendingRoleChange>();
  for (const p of await pendingRoleChanges(db)) pending.set(p.userId, p);
  return (await listUsers(db)).map((u) => toPublicUser(u, pending.get(u.id) ?? null));
}

export const findByUsername = (db: Db, username: string): Promise<AppUserRow | undefined> =>
  db('app_user').where({ username }).first();

export const findById = (db: Db, id: number): Promise<AppUserRow | undefined> => db('app_user').where({ id }).first();

export const listUsers = (db: Db): Promise<AppUserRow[]> => db('app_user').orderBy('username');

export async function insertUser(db: Db, u: AppUserInsert): Promise<number> {
  const [id] = await db('app_user').insert(u);
  return id;
}

export async function updateUser(db: Db, id: number, patch: Partial<AppUserInsert>): Promise<void> {
  await db('app_user')
    .where({ id })
    .update({ ...patch, updated_at: new Date() });
}
