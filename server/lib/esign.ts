/**
 * Electronic signatures (21 CFR 11.50, 11.70, 11.200). A signature re-asks the password; the
 * first signing in a session also asks the user name (both components). The row records the
 * signer, printed name, meaning, UTC time and the SHA-256 of the canonical signed content, and is
 * written in the caller's transaction together with an audit event. A wrong password is refused
 * and audited (in its own transaction, so the refusal is kept even though the action rolls back).
 */
import type { Knex } from 'knex';
import { appendAudit, auditNow } from './audit';
import { clearCredentialFailures, isLocked, lockoutPolicy, recordCredentialFailure } from './lockout';
import type { SignatureInput, SignatureMeaning, SignatureRecord } from './contract';
import { canonicalJson, sha256Hex } from './canonical';
import { AppError } from './errors';
import type { AuthUser } from './http';
import { verifyPassword } from './passwords';
import { markSigned } from './sessions';
import { must } from './db';
import type { ESignatureRow } from './db-tables';

export interface SignRequest {
  user: AuthUser;
  credentials: SignatureInput;
  meaning: SignatureMeaning;
  entityType: string;
  entityId: string | number;
  content: unknown; // what is signed; its canonical SHA-256 is stored
  statement?: string | null;
  ip?: string | null;
}

export function contentHash(content: unknown): string {
  return sha256Hex(canonicalJson(content));
}

/**
 * Checks the credentials; throws 401 (audited) when they are wrong. Call BEFORE opening the
 * transaction. A wrong password counts toward the account's lock-out like a failed sign-in
 * (server/lib/lockout.ts); a locked account cannot sign at all (423), and the failure that locks it
 * also ends its sessions. A correct password ends a run of failures.
 */
export async function checkSignatureCredentials(db: Knex, r: Omit<SignRequest, 'content'>): Promise<void> {
  // the signer is signed in, so the account exists (accounts are never deleted)
  const u = must(await db('app_user').where({ id: r.user.id }).first(), `Account ${r.user.id}`);
  const refused = (reason: string) =>
    auditNow(db, {
      actor: { id: r.user.id, name: r.user.fullName },
      action: 'signature.refused',
      entityType: r.entityType,
      entityId: r.entityId,
      after: { meaning: r.meaning },
      reason,
      ip: r.ip,
    });
  if (isLocked(u)) {
    await refused('account locked');
    throw new AppError(
      423,
      'ACCOUNT_LOCKED',
      'Your account is locked after repeated wrong passwords. Nothing was signed. Wait until the lock ends or ask an administrator to unlock it.',
    );
  }
  const needsUsername = !r.user.signedOnce;
  if (needsUsername && (r.credentials.username ?? '').trim().toLowerCase() !== u.username.toLowerCase()) {
    const problem = 'The first signature of a session needs your user name and password.';
    await refused(problem);
    throw new AppError(401, 'SIGNATURE_REFUSED', problem, { needsUsername });
  }
  if (!(await verifyPassword(u.password_hash, r.credentials.password))) {
    const { locked } = await recordCredentialFailure(db, {
      userId: r.user.id,
      check: 'signature',
      entityType: r.entityType,
      entityId: r.entityId,
      after: { meaning: r.meaning },
      reason: 'The password is not correct. Nothing was signed.',
      ip: r.ip ?? null,
    });
    const problem = locked
      ? `The password is not correct. Nothing was signed. After ${lockoutPolicy().attempts} wrong passwords the account is locked and you are signed out; an administrator can unlock it.`
      : 'The password is not correct. Nothing was signed.';
    throw new AppError(401, 'SIGNATURE_REFUSED', problem, { needsUsername, locked });
  }
  await clearCredentialFailures(db, u);
}

/** Writes the signature row and its audit event inside the caller's transaction. */
export async function recordSignature(trx: Knex.Transaction, r: SignRequest): Promise<SignatureRecord> {
  const signedAt = new Date();
  const hash = contentHash(r.content);
  const [id] = await trx('e_signature').insert({
    user_id: r.user.id,
    printed_name: r.user.fullName,
    meaning: r.meaning,
    entity_type: r.entityType,
    entity_id: String(r.entityId),
    content_hash: hash,
    statement: r.statement ?? null,
    signed_at: signedAt,
  });
  await appendAudit(trx, {
    actor: { id: r.user.id, name: r.user.fullName },
    action: 'signature.signed',
    entityType: r.entityType,
    entityId: r.entityId,
    after: { signatureId: id, meaning: r.meaning, contentHash: hash },
    reason: r.statement ?? null,
    ip: r.ip,
  });
  if (!r.user.signedOnce) await markSigned(trx, r.user.sessionId);
  return {
    id,
    userId: r.user.id,
    printedName: r.user.fullName,
    meaning: r.meaning,
    signedAt: signedAt.toISOString(),
    contentHash: hash,
    statement: r.statement ?? null,
  };
}

/** Signatures on a record, oldest first, for display wherever the record is shown. */
export async function signaturesFor(
  db: Knex | Knex.Transaction,
  entityType: string,
  entityId: string | number,
): Promise<SignatureRecord[]> {
  const rows = await db('e_signature')
    .where({ entity_type: entityType, entity_id: String(entityId) })
    .orderBy('id');
  return rows.map(toSignatureRecord);
}

/** A signature row (or the same columns read through a join) as the contract's record. */
export function toSignatureRecord(s: Omit<ESignatureRow, 'entity_type' | 'entity_id'>): SignatureRecord {
  return {
    id: s.id,
    userId: s.user_id,
    printedName: s.printed_name,
    meaning: s.meaning,
    signedAt: new Date(s.signed_at).toISOString(),
    contentHash: s.content_hash,
    statement: s.statement ?? null,
  };
}
