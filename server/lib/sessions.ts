/**
 * Sessions: the design of the lucia v3 guide, implemented over Knex with @oslojs.
 * The cookie carries a random token; the database keeps only SHA-256(token) as the id.
 * Idle expiry (default 30 min) and an absolute maximum (default 12 h). This is the one
 * place that knows how sessions work; swapping the implementation touches only this file.
 */
import { sha256 } from '@oslojs/crypto/sha2';
import { encodeBase32LowerCaseNoPadding, encodeHexLowerCase } from '@oslojs/encoding';
import type { Knex } from 'knex';
import type { UserSessionRow } from './db-tables';

export const SESSION_COOKIE = 'drumline_session';

export function generateSessionToken(): string {
  const bytes = new Uint8Array(20);
  crypto.getRandomValues(bytes);
  return encodeBase32LowerCaseNoPadding(bytes);
}

export function sessionIdFromToken(token: string): string {
  return encodeHexLowerCase(sha256(new TextEncoder().encode(token)));
}

export async function createSession(
  db: Knex | Knex.Transaction,
  userId: number,
  maxHours: number,
  ip: string | null,
): Promise<{ token: string; id: string }> {
  const token = generateSessionToken();
  const id = sessionIdFromToken(token);
  const now = new Date();
  await db('user_session').insert({
    id,
    user_id: userId,
    created_at: now,
    last_seen_at: now,
    expires_at: new Date(now.getTime() + maxHours * 3600_000),
    signed_once: false,
    ip,
  });
  return { token, id };
}

/** Returns the live session for a token and refreshes its idle timer, or null. */
export async function validateSession(db: Knex, token: string, idleMinutes: number): Promise<UserSessionRow | null> {
  const id = sessionIdFromToken(token);
  const s = await db('user_session').where({ id }).first();
  if (!s) return null;
  const now = Date.now();
  const idleLimit = new Date(s.last_seen_at).getTime() + idleMinutes * 60_000;
  if (now >= new Date(s.expires_at).getTime() || now >= idleLimit) {
    await db('user_session').where({ id }).delete();
    return null;
  }
  if (now - new Date(s.last_seen_at).getTime() > 5_000) {
    await db('user_session')
      .where({ id })
      .update({ last_seen_at: new Date(now) });
  }
  return s;
}

export async function invalidateSession(db: Knex | Knex.Transaction, id: string): Promise<void> {
  await db('user_session').where({ id }).delete();
}

export async function invalidateUserSessions(db: Knex | Knex.Transaction, userId: number): Promise<void> {
  await db('user_session').where({ user_id: userId }).delete();
}

export async function markSigned(db: Knex | Knex.Transaction, id: string): Promise<void> {
  await db('user_session').where({ id }).update({ signed_once: true });
}
