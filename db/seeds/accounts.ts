/**
 * Demo accounts, one per role plus one holding two roles (for the segregation-of-duties demo).
 * DEMO ONLY: invented people, one shared demo password documented in README. A real site
 * creates its accounts through the admin page and never runs the demo seed.
 */
import type { Knex } from 'knex';
import { appendAudit, SYSTEM_ACTOR } from '../../server/lib/audit';
import { hashPassword } from '../../server/lib/passwords';
import type { Role } from '../../server/lib/contract';

export const DEMO_PASSWORD = 'drumline-demo-2026';

export const DEMO_ACCOUNTS: { username: string; fullName: string; email: string; roles: Role[] }[] = [
  { username: 'olga', fullName: 'Olga Brandt', email: 'olga.brandt@lindenhall.example', roles: ['operator'] },
  { username: 'victor', fullName: 'Victor Mensah', email: 'victor.mensah@lindenhall.example', roles: ['verifier'] },
  { username: 'quinn', fullName: 'Quinn Okafor', email: 'quinn.okafor@lindenhall.example', roles: ['qa_manager'] },
  { username: 'aurelia', fullName: 'Aurelia Santos', email: 'aurelia.santos@lindenhall.example', roles: ['auditor'] },
  { username: 'adam', fullName: 'Adam Lindqvist', email: 'adam.lindqvist@lindenhall.example', roles: ['admin'] },
  {
    username: 'dana',
    fullName: 'Dana Whitfield',
    email: 'dana.whitfield@lindenhall.example',
    roles: ['operator', 'verifier'],
  },
  // A second QA manager: references are uploaded by one QA person and approved by another.
  { username: 'irene', fullName: 'Irene Castell', email: 'irene.castell@lindenhall.example', roles: ['qa_manager'] },
];

export async function seedAccounts(db: Knex): Promise<void> {
  const hash = await hashPassword(DEMO_PASSWORD);
  await db.transaction(async (trx) => {
    for (const a of DEMO_ACCOUNTS) {
      if (await trx('app_user').where({ username: a.username }).first()) continue;
      const now = new Date();
      const [id] = await trx('app_user').insert({
        username: a.username,
        full_name: a.fullName,
        email: a.email,
        password_hash: hash,
        roles: JSON.stringify(a.roles),
        must_change_password: 0,
        failed_attempts: 0,
        active: 1,
        created_at: now,
        updated_at: now,
      });
      await appendAudit(trx, {
        actor: SYSTEM_ACTOR,
        action: 'user.created',
        entityType: 'user',
        entityId: id,
        after: { username: a.username, fullName: a.fullName, roles: a.roles },
        reason: 'demo seed',
      });
    }
  });
}
