/**
 * Creates a site's first accounts (docs/access.md, "The first accounts of a site"): the one
 * exception to the two-person rule for role grants, run once by the person who installs
 * Drumline, with the owner database account. Refused when the site has any account already, and
 * unless the list holds at least two administrators (so that every later QA manager, verifier
 * or administrator grant can be confirmed by a second one). Each account gets a random temporary
 * password, printed once, that must be changed at the first sign-in. Audited per account as
 * `user.created-at-site-setup`.
 *
 *   npm run accounts:first -- accounts.json
 *
 * accounts.json: [{ "username": "...", "fullName": "...", "email": "...", "roles": ["admin"] }, ...]
 */
import fs from 'node:fs';
import { randomBytes } from 'node:crypto';
import knexFactory, { type Knex } from 'knex';
import { z } from 'zod';
import { dbSettings, knexConfig } from './config';
import { createSiteAccounts, type SiteAccount } from './site-accounts';
import { hashPassword } from '../server/lib/passwords';
import { ROLES, roleCombinationProblem } from '../server/lib/contract';

export const firstAccountsSchema = z
  .array(
    z.object({
      username: z
        .string()
        .trim()
        .min(3)
        .max(64)
        .regex(/^[a-z0-9._-]+$/, 'Use lower-case letters, digits, dot, dash or underscore.'),
      fullName: z.string().trim().min(2).max(120),
      email: z.email().max(200),
      roles: z.array(z.enum(ROLES)).min(1),
    }),
  )
  .min(2);

/** Why this list cannot be a site's first accounts, or null. */
export function firstAccountsProblem(accounts: SiteAccount[]): string | null {
  for (const a of accounts) {
    const p = roleCombinationProblem(a.roles);
    if (p) return `${a.username}: ${p}`;
  }
  if (accounts.filter((a) => a.roles.includes('admin')).length < 2)
    return 'Name at least two administrators: QA manager, verifier and administrator grants need a second administrator to confirm them.';
  if (new Set(accounts.map((a) => a.username)).size !== accounts.length) return 'A user name appears twice.';
  return null;
}

/** Creates the accounts through `owner`; returns each user name with its temporary password. */
export async function createFirstAccounts(owner: Knex, accounts: SiteAccount[]): Promise<Map<string, string>> {
  const problem = firstAccountsProblem(accounts);
  if (problem) throw new Error(problem);
  const existing = Number((await owner('app_user').count({ n: '*' }).first())?.n ?? 0);
  if (existing > 0)
    throw new Error(
      `This site has ${existing} account(s) already. Further accounts are created by an administrator in Drumline.`,
    );
  const passwords = new Map(accounts.map((a) => [a.username, randomBytes(12).toString('base64url')]));
  await createSiteAccounts(owner, accounts, {
    passwordHash: (a) => hashPassword(passwords.get(a.username)!),
    mustChangePassword: true,
    reason: 'site setup: the first accounts of the site (npm run accounts:first)',
  });
  return passwords;
}

const isMain = process.argv[1]?.endsWith('first-accounts.ts');
if (isMain) {
  const file = process.argv[2];
  const run = async () => {
    if (!file) throw new Error('usage: npm run accounts:first -- accounts.json');
    const parsed = firstAccountsSchema.safeParse(JSON.parse(fs.readFileSync(file, 'utf8')));
    if (!parsed.success)
      throw new Error(
        `${file}: ${parsed.error.issues.map((i) => `${i.path.join('.') || '(list)'}: ${i.message}`).join('; ')}`,
      );
    const owner = knexFactory(knexConfig(dbSettings('owner'), { min: 0, max: 1 }));
    try {
      const passwords = await createFirstAccounts(owner, parsed.data);
      console.log('Accounts created. Hand each temporary password over in person; it is not shown again:');
      for (const [u, pw] of passwords) console.log(`  ${u.padEnd(24)} ${pw}`);
    } finally {
      await owner.destroy();
    }
  };
  run().catch((e) => {
    console.error('[accounts:first]', e instanceof Error ? e.message : e);
    process.exitCode = 1;
  });
}
