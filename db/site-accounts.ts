/**
 * The site-setup path for accounts (docs/access.md): the only way to give roles without a second
 * administrator, reserved to the owner database account (the role_grant trigger refuses a
 * 'site-setup' grant from any other account). Used by the command that creates a site's first
 * accounts (db/first-accounts.ts), by the demo seed, and by the tests to make their accounts.
 */
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../server/lib/audit';
import { must } from '../server/lib/db';
import { canonicalRoles, roleCombinationProblem, type Role } from '../server/lib/contract';
import { insertRoleGrant } from '../server/lib/grant-seal';

export interface SiteAccount {
  username: string;
  fullName: string;
  email: string;
  roles: Role[];
}

export const SITE_SETUP_ACTOR: Actor = { id: null, name: 'Drumline site setup (owner account)' };

export interface SiteAccountOptions {
  /** Argon2id hash of the account's (temporary) password */
  passwordHash: (a: SiteAccount) => string | Promise<string>;
  mustChangePassword: boolean;
  /** why these accounts are created outside the two-person rule; kept in the audit trail */
  reason: string;
  /** write the 'user.created-at-site-setup' audit event (off only for test fixtures) */
  audit?: boolean;
  /** accounts whose user name exists already are left as they are (the demo seed is idempotent) */
  skipExisting?: boolean;
}

/** Creates accounts with their roles through the owner connection `owner`, in one transaction. Returns their ids. */
export async function createSiteAccounts(
  owner: Knex,
  accounts: SiteAccount[],
  opts: SiteAccountOptions,
): Promise<Map<string, number>> {
  for (const a of accounts) {
    const p = roleCombinationProblem(a.roles);
    if (p) throw new Error(`${a.username}: ${p}`);
  }
  const hashes = new Map<string, string>();
  for (const a of accounts) hashes.set(a.username, await opts.passwordHash(a));
  const ids = new Map<string, number>();
  await owner.transaction(async (trx) => {
    for (const a of accounts) {
      const existing = await trx('app_user').where({ username: a.username }).first('id');
      if (existing) {
        if (!opts.skipExisting) throw new Error(`the user name ${a.username} is already taken`);
        ids.set(a.username, existing.id);
        continue;
      }
      const now = new Date();
      const roles = JSON.stringify(canonicalRoles(a.roles));
      const [id] = await trx('app_user').insert({
        username: a.username,
        full_name: a.fullName,
        email: a.email,
        password_hash: must(hashes.get(a.username), `The password hash of ${a.username}`),
        roles: '[]',
        must_change_password: opts.mustChangePassword ? 1 : 0,
        failed_attempts: 0,
        active: 1,
        password_changed_at: opts.mustChangePassword ? null : now,
        created_at: now,
        updated_at: now,
      });
      const grantId = await insertRoleGrant(trx, {
        user_id: id,
        roles,
        kind: 'site-setup',
        granted_by: null,
        granted_at: now,
        reason: opts.reason,
      });
      await trx('app_user').where({ id }).update({ roles });
      if (opts.audit !== false)
        await appendAudit(trx, {
          actor: SITE_SETUP_ACTOR,
          action: 'user.created-at-site-setup',
          entityType: 'user',
          entityId: id,
          after: { username: a.username, fullName: a.fullName, roles: canonicalRoles(a.roles), grantId },
          reason: opts.reason,
        });
      ids.set(a.username, id);
    }
  });
  return ids;
}
