/**
 * Demo accounts, one per role plus one holding two roles (for the segregation-of-duties demo) and a
 * second administrator (for the two-person rule on role grants, docs/access.md).
 * DEMO ONLY: invented people, one shared demo password documented in README. They are created
 * through the site-setup path (db/site-accounts.ts, owner account), as a real site's first accounts
 * are by `npm run accounts:first`; a real site never runs the demo seed.
 */
import knexFactory from 'knex';
import { dbSettings, knexConfig } from '../config';
import { createSiteAccounts } from '../site-accounts';
import { hashPassword } from '../../server/lib/passwords';
import type { Role } from '../../server/lib/contract';

export const DEMO_PASSWORD = 'drumline-demo-2026';

export const DEMO_ACCOUNTS: { username: string; fullName: string; email: string; roles: Role[] }[] = [
  { username: 'olga', fullName: 'Olga Brandt', email: 'olga.brandt@lindenhall.example', roles: ['operator'] },
  { username: 'victor', fullName: 'Victor Mensah', email: 'victor.mensah@lindenhall.example', roles: ['verifier'] },
  { username: 'quinn', fullName: 'Quinn Okafor', email: 'quinn.okafor@lindenhall.example', roles: ['qa_manager'] },
  { username: 'aurelia', fullName: 'Aurelia Santos', email: 'aurelia.santos@lindenhall.example', roles: ['auditor'] },
  { username: 'adam', fullName: 'Adam Lindqvist', email: 'adam.lindqvist@lindenhall.example', roles: ['admin'] },
  // A second administrator: QA manager, verifier and administrator grants need one to confirm.
  {
    username: 'sigrid',
    fullName: 'Sigrid Achterberg',
    email: 'sigrid.achterberg@lindenhall.example',
    roles: ['admin'],
  },
  {
    username: 'dana',
    fullName: 'Dana Whitfield',
    email: 'dana.whitfield@lindenhall.example',
    roles: ['operator', 'verifier'],
  },
  // A second QA manager: references are uploaded by one QA person and approved by another.
  { username: 'irene', fullName: 'Irene Castell', email: 'irene.castell@lindenhall.example', roles: ['qa_manager'] },
];

/** Creates the demo accounts in `database` (default: the configured one); existing ones are kept. */
export async function seedAccounts(database?: string): Promise<void> {
  const hash = await hashPassword(DEMO_PASSWORD);
  const owner = knexFactory(knexConfig(dbSettings('owner', database), { min: 0, max: 1 }));
  try {
    await createSiteAccounts(owner, DEMO_ACCOUNTS, {
      passwordHash: () => hash,
      mustChangePassword: false,
      reason: 'demo seed: the first accounts of the invented demo site',
      skipExisting: true,
    });
  } finally {
    await owner.destroy();
  }
}
