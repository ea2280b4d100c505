/** Argon2id password hashing (OWASP minimum parameters: m=19456 KiB, t=2, p=1). */
import { hash, verify } from '@node-rs/argon2';

const OPTS = { memoryCost: 19456, timeCost: 2, parallelism: 1, algorithm: 2 } as const; // 2 = Argon2id

export const MIN_PASSWORD_LENGTH = 12;

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

/** Returns a sentence saying what is wrong with a new password, or null when it is acceptable. */
export function passwordProblem(pw: string, username?: string): string | null {
  if (pw.length < MIN_PASSWORD_LENGTH) return `The password must have at least ${MIN_PASSWORD_LENGTH} characters.`;
  if (pw.length > 200) return 'The password must have at most 200 characters.';
  if (username && pw.toLowerCase().includes(username.toLowerCase()))
    return 'The password must not contain the user name.';
  return null;
}
