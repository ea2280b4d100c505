/**
 * Passwords: Argon2id hashing (OWASP minimum parameters: m=19456 KiB, t=2, p=1) and the rules for a
 * new password (docs/compliance.md, "Authentication"):
 * - 12 to 200 characters, not containing the user name;
 * - strong enough by the zxcvbn estimator (@zxcvbn-ts/core with its common and English dictionaries,
 *   the person's own names as extra words): score 3 or more, i.e. at least 10^8 guesses
 *   (MIN_STRENGTH_SCORE says why);
 * - not the published demo password (nor a variant of it), for any account created or changed through
 *   the application; it stays only on the accounts the demo seed writes directly;
 * - not one of the account's last five passwords (the current one included; password_history
 *   keeps their hashes).
 */
import { hash, verify } from '@node-rs/argon2';
import type { Knex } from 'knex';
import { passwordStrengthOff } from '../workers/pool';

const OPTS = { memoryCost: 19456, timeCost: 2, parallelism: 1, algorithm: 2 } as const; // 2 = Argon2id

export const MIN_PASSWORD_LENGTH = 12;

/**
 * zxcvbn score a new password must reach. Score 3 means the estimator needs 10^8 to 10^10 guesses
 * ("safely unguessable: moderate protection from an offline slow-hash scenario"). Online guessing is
 * already capped by the lock-out (5 failures per 15 minutes, about 480 a day), which puts 10^8
 * guesses out of reach for centuries; and a stolen Argon2id hash costs about 15 ms per guess and
 * core, so 10^8 guesses take an attacker some 17 core-days per account. Score 4 (10^10) would
 * refuse many passphrases people can remember without adding much behind this hash and lock-out.
 */
export const MIN_STRENGTH_SCORE = 3;

/** How many of an account's passwords (the current one included) a new one must differ from. */
export const PASSWORD_HISTORY = 5;

/** The demo accounts' shared password, published in the README. Only the demo seed may set it. */
export const PUBLISHED_DEMO_PASSWORD = 'drumline-demo-2026';

export function hashPassword(pw: string): Promise<string> {
  return hash(pw, OPTS);
}

export async function verifyPassword(hashed: string, pw: string): Promise<boolean> {
  try {
    return await verify(hashed, pw);
  } catch {
    return false;
  }
}

/** A hash of nothing anyone knows: checked when there is no account, so every answer costs the same. */
export const DUMMY_HASH =
  '$argon2id$v=19$m=19456,t=2,p=1$c29tZXNhbHRzb21lc2FsdA$Zm9vYmFyZm9vYmFyZm9vYmFyZm9vYmFyZm9vYmE';

export interface PasswordOwner {
  username: string;
  fullName?: string;
  email?: string;
}

/** Returns a sentence saying what is wrong with a new password, or null when it is acceptable. */
export async function passwordProblem(pw: string, owner: PasswordOwner): Promise<string | null> {
  if (pw.length < MIN_PASSWORD_LENGTH) return `The password must have at least ${MIN_PASSWORD_LENGTH} characters.`;
  if (pw.length > 200) return 'The password must have at most 200 characters.';
  // The published password and its obvious variants (another year, capitals, a sign added).
  if (
    pw
      .toLowerCase()
      .replace(/[^a-z]/g, '')
      .includes(PUBLISHED_DEMO_PASSWORD.replace(/[^a-z]/g, ''))
  )
    return 'This is (a variant of) the published demo password; anyone can read it. Choose a password of your own.';
  if (owner.username && pw.toLowerCase().includes(owner.username.toLowerCase()))
    return 'The password must not contain the user name.';
  const words = [
    owner.username,
    ...(owner.fullName ?? '').split(/\s+/),
    ...(owner.email ?? '').split(/[@.]/),
    'drumline',
    'demo',
  ].filter((w) => w && w.length >= 3);
  const s = await passwordStrengthOff(pw, words);
  if (s.score < MIN_STRENGTH_SCORE) {
    const why = s.warning ? ` ${s.warning}` : '';
    const tip = s.suggestions.length ? ` ${s.suggestions.join(' ')}` : '';
    return `This password is too easy to guess.${why}${tip} A few unrelated words with a number or a sign between them are strong and easy to remember.`;
  }
  return null;
}

/** True when `pw` is the account's current password or one of its last PASSWORD_HISTORY passwords. */
export async function isRecentPassword(
  db: Knex | Knex.Transaction,
  user: { id: number; password_hash: string },
  pw: string,
): Promise<boolean> {
  const rows: { password_hash: string }[] = await db('password_history')
    .where({ user_id: user.id })
    .orderBy('id', 'desc')
    .limit(PASSWORD_HISTORY)
    .select('password_hash');
  const hashes = [...new Set([user.password_hash, ...rows.map((r) => r.password_hash)])].slice(0, PASSWORD_HISTORY);
  for (const h of hashes) if (await verifyPassword(h, pw)) return true;
  return false;
}

/** Keeps the hash of a password just set (in the caller's transaction). */
export async function rememberPassword(trx: Knex.Transaction, userId: number, passwordHash: string): Promise<void> {
  await trx('password_history').insert({ user_id: userId, password_hash: passwordHash, set_at: new Date() });
}
