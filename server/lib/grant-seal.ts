/**
 * Sealed role grants (docs/access.md, "Roles and who grants them"; docs/compliance.md, "What
 * protects what"). The database triggers check that a role grant is well formed (db/migrations/
 * 051_role_grants.ts), but a well-formed row can be written by whoever holds the runtime database
 * password: a made-up 'administrator' grant naming an administrator, or a whole forged 'two-person'
 * chain (request, signature row, decision, grant). So every grant also carries a seal: an HMAC-SHA-256
 * of its content, including the grant it follows, under a key derived from the audit-chain key, which
 * is held outside MariaDB (server/lib/audit-key.ts). Drumline honours an account's roles only when its
 * latest grant's seal verifies and the grant follows the account's previous grant (a replayed old
 * grant does not); otherwise the account acts with no role and the integrity sweep raises an alert.
 * Every grant is written through `insertRoleGrant`, the one writer of role_grant.
 */
import crypto from 'node:crypto';
import type { Knex } from 'knex';
import { auditKey } from './audit-key';
import { canonicalJson } from './canonical';
import type { RoleGrantInsert, RoleGrantRow } from './db-tables';

type Sealed = Pick<
  RoleGrantRow,
  | 'user_id'
  | 'roles'
  | 'kind'
  | 'granted_by'
  | 'request_id'
  | 'decision_id'
  | 'granted_at'
  | 'reason'
  | 'previous_grant_id'
>;

let derived: { from: Buffer; key: Buffer } | null = null;

/** The seal key: HMAC of a fixed label under the audit-chain key (never stored). */
function sealKey(): Buffer {
  const k = auditKey().key;
  if (!derived || !derived.from.equals(k))
    derived = { from: k, key: crypto.createHmac('sha256', k).update('drumline role grant seal').digest() };
  return derived.key;
}

/** The seal of a grant's content (64 hex digits). */
export function grantSeal(g: Sealed): string {
  const content = canonicalJson({
    v: 1,
    userId: g.user_id,
    roles: g.roles,
    kind: g.kind,
    grantedBy: g.granted_by ?? null,
    requestId: g.request_id ?? null,
    decisionId: g.decision_id ?? null,
    grantedAt: new Date(g.granted_at).toISOString(),
    reason: g.reason,
    previousGrantId: g.previous_grant_id ?? null,
  });
  return crypto.createHmac('sha256', sealKey()).update(content).digest('hex');
}

function sealMatches(g: Sealed & { seal: string }): boolean {
  const expected = Buffer.from(grantSeal(g), 'hex');
  const found = Buffer.from(/^[0-9a-f]{64}$/.test(g.seal) ? g.seal : '', 'hex');
  return found.length === expected.length && crypto.timingSafeEqual(found, expected);
}

/**
 * Writes a role grant with its link to the account's previous grant and its seal; the caller's
 * transaction holds the account row (the database refuses a grant whose link is not the latest).
 */
export async function insertRoleGrant(
  trx: Knex.Transaction,
  g: Omit<RoleGrantInsert, 'id' | 'seal' | 'previous_grant_id'>,
): Promise<number> {
  const prev = await trx('role_grant').where({ user_id: g.user_id }).orderBy('id', 'desc').first('id');
  const row = {
    ...g,
    granted_by: g.granted_by ?? null,
    request_id: g.request_id ?? null,
    decision_id: g.decision_id ?? null,
    previous_grant_id: prev?.id ?? null,
  };
  const [id] = await trx('role_grant').insert({ ...row, seal: grantSeal(row) });
  return id;
}

export type GrantStanding =
  { ok: true; grantId: number | null; roles: string } | { ok: false; grantId: number; roles: string; why: string };

/**
 * Whether an account's latest grant is one Drumline wrote: its seal verifies and it follows the
 * grant before it. An account without any grant holds no role ('[]').
 */
export async function grantStanding(db: Knex | Knex.Transaction, userId: number): Promise<GrantStanding> {
  const [latest, before] = await db('role_grant').where({ user_id: userId }).orderBy('id', 'desc').limit(2);
  if (!latest) return { ok: true, grantId: null, roles: '[]' };
  const bad = (why: string): GrantStanding => ({ ok: false, grantId: latest.id, roles: latest.roles, why });
  if ((latest.previous_grant_id ?? null) !== (before?.id ?? null))
    return bad(`grant ${latest.id} does not follow the account's previous grant (a replayed or inserted row)`);
  if (!sealMatches(latest)) return bad(`grant ${latest.id} has no valid seal (written outside Drumline)`);
  return { ok: true, grantId: latest.id, roles: latest.roles };
}
