/**
 * Role grants and the two-person rule (docs/access.md, "Roles and who grants them"). An account's
 * roles are the roles of its latest row in the append-only table role_grant; app_user.roles is
 * kept equal to it (a database trigger refuses anything else, db/migrations/051_role_grants.ts).
 * Each grant is sealed and linked to the one before (server/lib/grant-seal.ts, `insertRoleGrant`).
 * - Removing roles, and adding operator or auditor, is one administrator's change ('administrator').
 * - Adding QA manager, verifier or administrator is a request that a second administrator
 *   confirms with an e-signature ('two-person'); the requester may withdraw it, another
 *   administrator may decline it. The part of a change that needs no confirmation applies at once.
 * - Nobody changes their own roles, and the administrator role is held alone.
 * Every step is audited in the same transaction; a request is mailed to the other administrators.
 */
import { transactionWithRetry } from '../../lib/retry';
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import { checkSignatureCredentials, recordSignature } from '../../lib/esign';
import { AppError, conflict, forbidden, notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { must, parseJson } from '../../lib/db';
import type { AppUserRow } from '../../lib/db-tables';
import { enqueueMailToRole } from '../../lib/mail';
import {
  canonicalRoles,
  CONFIRMED_ROLES,
  ROLE_LABELS,
  roleCombinationProblem,
  type Role,
  type SignatureInput,
} from '../../lib/contract';
import { invalidateUserSessions } from '../../lib/sessions';
import { insertRoleGrant } from '../../lib/grant-seal';
import { pageLink } from '../../lib/links';
import type { RoleChangeWaiting } from './contract';
import * as repo from './repo';

const words = (roles: readonly Role[]) => (roles.length ? roles.map((r) => ROLE_LABELS[r]).join(', ') : 'no role');

/** The roles that may be given at once, and what is left for a second administrator to confirm. */
export function splitChange(current: readonly Role[], wanted: readonly Role[]): { now: Role[]; confirm: Role[] } {
  const needs = wanted.filter((r) => CONFIRMED_ROLES.includes(r) && !current.includes(r));
  return {
    now: canonicalRoles(wanted.filter((r) => !needs.includes(r))),
    confirm: canonicalRoles(wanted),
  };
}

export function assertRolesAllowed(roles: readonly Role[]): void {
  const p = roleCombinationProblem(roles);
  if (p) throw new AppError(400, 'ROLE_COMBINATION', p, { roles });
}

const same = (a: readonly Role[], b: readonly Role[]) =>
  JSON.stringify(canonicalRoles(a)) === JSON.stringify(canonicalRoles(b));

/** Grants `roles` by one administrator (never adds a confirmed role; the database checks that too). */
async function grantDirect(
  trx: Knex.Transaction,
  actor: Actor,
  user: AppUserRow,
  roles: Role[],
  reason: string,
  ip: string | null,
  audit = true,
): Promise<number> {
  const before = repo.toPublicUser(user);
  const json = JSON.stringify(canonicalRoles(roles));
  const grantId = await insertRoleGrant(trx, {
    user_id: user.id,
    roles: json,
    kind: 'administrator',
    granted_by: actor.id,
    granted_at: new Date(),
    reason,
  });
  await repo.updateUser(trx, user.id, { roles: json });
  await invalidateUserSessions(trx, user.id);
  if (audit) {
    const after = repo.toPublicUser(must(await repo.findById(trx, user.id), `Account ${user.id}`));
    await appendAudit(trx, {
      actor,
      action: 'user.roles-changed',
      entityType: 'user',
      entityId: user.id,
      before,
      after: { ...after, grantId, grantKind: 'administrator' },
      reason,
      ip,
    });
  }
  return grantId;
}

async function requestChange(
  trx: Knex.Transaction,
  actor: Actor,
  user: AppUserRow,
  rolesBefore: Role[],
  rolesAfter: Role[],
  reason: string,
  ip: string | null,
): Promise<number> {
  const open = await repo.pendingRoleChanges(trx, user.id);
  if (open.length)
    throw conflict(
      `A role change of ${user.username} already waits for confirmation (${words(open[0].rolesAfter)}, asked by ${open[0].requestedByName}). Confirm, decline or withdraw it first.`,
      { requestId: open[0].requestId },
    );
  const [id] = await trx('role_request').insert({
    user_id: user.id,
    roles_before: JSON.stringify(canonicalRoles(rolesBefore)),
    roles_after: JSON.stringify(canonicalRoles(rolesAfter)),
    requested_by: personId(actor),
    requested_at: new Date(),
    reason,
  });
  await appendAudit(trx, {
    actor,
    action: 'user.role-change-requested',
    entityType: 'user',
    entityId: user.id,
    before: { roles: canonicalRoles(rolesBefore) },
    after: { roles: canonicalRoles(rolesAfter), requestId: id, awaits: 'confirmation by a second administrator' },
    reason,
    ip,
  });
  await enqueueMailToRole(
    trx,
    'admin',
    `Role change to confirm: ${user.full_name} (${user.username})`,
    [
      `${actor.name} asks to change the roles of ${user.full_name} (${user.username})`,
      `from: ${words(rolesBefore)}`,
      `to: ${words(rolesAfter)}`,
      `Reason: ${reason}`,
      '',
      'QA manager, verifier and administrator are granted only when a second administrator confirms.',
      `Confirm or decline: ${pageLink('/admin/users')}`,
    ].join('\n'),
    actor.id ?? undefined,
  );
  return id;
}

/** The account that asks for or decides a role change: always a person, never the system. */
function personId(actor: Actor): number {
  if (actor.id === null) throw new Error('A role change is asked for and decided by an account, never by the system');
  return actor.id;
}

/**
 * Applies a wanted role set to an account inside the caller's transaction: the part that needs no
 * confirmation at once, the rest as a request. Returns the request id, or null. With
 * auditDirect=false the caller audits the direct grant itself, in afterDirect (account creation
 * does, in its user.created event, which then precedes the request's event).
 */
export async function changeRoles(
  trx: Knex.Transaction,
  actor: Actor,
  user: AppUserRow,
  wanted: Role[],
  reason: string,
  ip: string | null,
  opts: { auditDirect?: boolean; afterDirect?: () => Promise<void> } = {},
): Promise<number | null> {
  if (actor.id === user.id)
    throw forbidden('Nobody changes their own roles: another administrator must do it (segregation of duties).');
  assertRolesAllowed(wanted);
  const current = parseJson<Role[]>(user.roles, []);
  const { now, confirm } = splitChange(current, wanted);
  if (!same(now, current)) await grantDirect(trx, actor, user, now, reason, ip, opts.auditDirect ?? true);
  await opts.afterDirect?.();
  if (same(confirm, now)) return null;
  const fresh = must(await repo.findById(trx, user.id), `Account ${user.id}`);
  return requestChange(trx, actor, fresh, now, confirm, reason, ip);
}

async function lockedRequest(trx: Knex.Transaction, requestId: number) {
  const r = await trx('role_request').where({ id: requestId }).forUpdate().first();
  if (!r) throw notFound('The role change');
  const decided = await trx('role_decision').where({ request_id: requestId }).first();
  if (decided) throw conflict(`This role change was already ${decided.decision}.`, { decision: decided.decision });
  return r;
}

/** The content a confirmation signs: the request as it stands (re-checked by the integrity sweep). */
export function roleRequestSignedContent(r: {
  id: number;
  user_id: number;
  roles_before: string;
  roles_after: string;
  requested_by: number;
  reason: string;
}) {
  return {
    requestId: r.id,
    userId: r.user_id,
    rolesBefore: parseJson<Role[]>(r.roles_before, []),
    rolesAfter: parseJson<Role[]>(r.roles_after, []),
    requestedBy: r.requested_by,
    reason: r.reason,
  };
}

/** Days after an administrator reset another's password or changed their e-mail in which that other account cannot confirm the first one's role requests. */
export const CONTROL_WINDOW_DAYS = 90;

/**
 * The two-person rule needs two people. An administrator who reset the confirming account's password
 * (and so knew a password of it) or changed its e-mail address (where a reset would be sent) could be
 * the one confirming. Within CONTROL_WINDOW_DAYS of such a change, a third administrator confirms.
 */
async function assertNotControlledByRequester(db: Knex, confirmer: AuthUser, requesterId: number): Promise<void> {
  const since = new Date(Date.now() - CONTROL_WINDOW_DAYS * 86_400_000);
  const events = await db('audit_event')
    .where({ entity_type: 'user', entity_id: String(confirmer.id), actor_id: requesterId })
    .whereIn('action', ['user.password-reset', 'user.updated'])
    .where('occurred_at', '>=', since)
    .orderBy('id', 'desc')
    .select('action', 'occurred_at', 'before_json', 'after_json');
  const control = events.find((e) => {
    if (e.action === 'user.password-reset') return true;
    const b = parseJson<{ email?: string }>(e.before_json, {});
    const a = parseJson<{ email?: string }>(e.after_json, {});
    return b.email !== a.email;
  });
  if (control) {
    const requester = await db('app_user').where({ id: requesterId }).first();
    const what = control.action === 'user.password-reset' ? 'reset your password' : 'changed your e-mail address';
    throw forbidden(
      `${requester?.full_name ?? 'The requesting administrator'} ${what} on ${new Date(control.occurred_at).toISOString().slice(0, 10)}; ` +
        `within ${CONTROL_WINDOW_DAYS} days of that, a third administrator confirms their role requests (two-person rule).`,
    );
  }
}

export async function confirmRoleChange(
  db: Knex,
  user: AuthUser,
  requestId: number,
  signature: SignatureInput,
  ip: string | null,
) {
  const pre = await db('role_request').where({ id: requestId }).first();
  if (!pre) throw notFound('The role change');
  if (pre.requested_by === user.id)
    throw forbidden('You asked for this role change; a second administrator must confirm it (two-person rule).');
  if (pre.user_id === user.id) throw forbidden('Nobody confirms a change of their own roles.');
  await assertNotControlledByRequester(db, user, pre.requested_by);
  await checkSignatureCredentials(db, {
    user,
    credentials: signature,
    meaning: 'role-change-confirmed',
    entityType: 'role_request',
    entityId: requestId,
    ip,
  });
  const actor: Actor = { id: user.id, name: user.fullName };
  await transactionWithRetry(db, async (trx) => {
    const r = await lockedRequest(trx, requestId);
    // user_id is a foreign key: the account exists
    const locked = await trx('app_user').where({ id: r.user_id }).forUpdate().first();
    const subject = must(locked, `Account ${r.user_id}`);
    if (subject.roles !== r.roles_before)
      throw conflict(
        `The roles of ${subject.username} changed since this request (now ${words(parseJson<Role[]>(subject.roles, []))}). Decline it and ask again.`,
      );
    const sig = await recordSignature(trx, {
      user,
      credentials: signature,
      meaning: 'role-change-confirmed',
      entityType: 'role_request',
      entityId: requestId,
      content: roleRequestSignedContent(r),
      ip,
    });
    const now = new Date();
    const [decisionId] = await trx('role_decision').insert({
      request_id: requestId,
      decision: 'confirmed',
      decided_by: user.id,
      decided_at: now,
      reason: null,
      signature_id: sig.id,
    });
    const grantId = await insertRoleGrant(trx, {
      user_id: r.user_id,
      roles: r.roles_after,
      kind: 'two-person',
      granted_by: user.id,
      request_id: requestId,
      decision_id: decisionId,
      granted_at: now,
      reason: r.reason,
    });
    const before = repo.toPublicUser(subject);
    await repo.updateUser(trx, r.user_id, { roles: r.roles_after });
    await invalidateUserSessions(trx, r.user_id);
    const after = repo.toPublicUser(must(await repo.findById(trx, r.user_id), `Account ${r.user_id}`));
    const requester = await trx('app_user').where({ id: r.requested_by }).first();
    await appendAudit(trx, {
      actor,
      action: 'user.roles-changed',
      entityType: 'user',
      entityId: r.user_id,
      before,
      after: {
        ...after,
        grantId,
        grantKind: 'two-person',
        requestId,
        requestedBy: requester?.full_name ?? r.requested_by,
        confirmedBy: user.fullName,
        signatureId: sig.id,
      },
      reason: r.reason,
      ip,
    });
  });
  return repo.toPublicUser(must(await repo.findById(db, pre.user_id), `Account ${pre.user_id}`), null);
}

export async function declineRoleChange(db: Knex, actor: Actor, requestId: number, reason: string, ip: string | null) {
  const userId = await transactionWithRetry(db, async (trx) => {
    const r = await lockedRequest(trx, requestId);
    if (r.user_id === actor.id) throw forbidden('Nobody decides a change of their own roles.');
    const decision = r.requested_by === actor.id ? 'withdrawn' : 'declined';
    await trx('role_decision').insert({
      request_id: requestId,
      decision,
      decided_by: personId(actor),
      decided_at: new Date(),
      reason,
      signature_id: null,
    });
    await appendAudit(trx, {
      actor,
      action: decision === 'withdrawn' ? 'user.role-change-withdrawn' : 'user.role-change-declined',
      entityType: 'user',
      entityId: r.user_id,
      before: { roles: parseJson<Role[]>(r.roles_before, []) },
      after: { requested: parseJson<Role[]>(r.roles_after, []), requestId, decision },
      reason,
      ip,
    });
    return r.user_id;
  });
  return repo.toPublicUser(must(await repo.findById(db, userId), `Account ${userId}`), null);
}

export async function roleChangesWaiting(db: Knex): Promise<RoleChangeWaiting[]> {
  const pending = await repo.pendingRoleChanges(db);
  const users = new Map((await repo.listUsers(db)).map((u) => [u.id, u]));
  return pending.map((p) => ({
    ...p,
    username: users.get(p.userId)?.username ?? '',
    fullName: users.get(p.userId)?.full_name ?? '',
  }));
}

export function assertNotSelfStatus(actor: Actor, id: number, patch: { active?: boolean; roles?: Role[] }): void {
  if (actor.id !== id) return;
  if (patch.active !== undefined)
    throw forbidden('Nobody changes the status of their own account; another administrator must do it.');
  if (patch.roles !== undefined)
    throw forbidden('Nobody changes their own roles: another administrator must do it (segregation of duties).');
}
