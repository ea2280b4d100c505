/** Data access for accounts. */
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import type { Role } from '../../lib/contract';
import type { UserAccount } from './contract';

export interface UserRow {
  id: number;
  username: string;
  full_name: string;
  email: string;
  password_hash: string;
  roles: string;
  must_change_password: number;
  failed_attempts: number;
  locked_until: Date | null;
  active: number;
  password_changed_at: Date | null;
  created_at: Date;
  updated_at: Date;
}

export function toPublicUser(u: UserRow): UserAccount {
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
  };
}

export const findByUsername = (db: Db, username: string): Promise<UserRow | undefined> =>
  db('app_user').where({ username }).first();

export const findById = (db: Db, id: number): Promise<UserRow | undefined> => db('app_user').where({ id }).first();

export const listUsers = (db: Db): Promise<UserRow[]> => db('app_user').orderBy('username');

export async function insertUser(db: Db, u: Omit<UserRow, 'id'>): Promise<number> {
  const [id] = await db('app_user').insert(u);
  return id;
}

export async function updateUser(db: Db, id: number, patch: Partial<UserRow>): Promise<void> {
  await db('app_user')
    .where({ id })
    .update({ ...patch, updated_at: new Date() });
}
