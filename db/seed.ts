/**
 * Seeds the demo site into the configured database (idempotent: existing records are kept).
 *   tsx db/seed.ts
 */
import { closeDb, initDb } from '../server/lib/db';
import { seedAccounts } from './seeds/accounts';
import { seedDemoSite } from './seeds/demo';

export async function seedDemo(database?: string): Promise<void> {
  const db = initDb(database);
  await seedAccounts(database);
  // The invented demo site (grades, references, instruments, lots in every state), driven
  // through the application's own API; skipped when it is already there.
  await seedDemoSite(db, { database });
}

const isMain = process.argv[1]?.endsWith('seed.ts');
if (isMain) {
  seedDemo()
    .then(() => console.log('[seed] demo data in place'))
    .catch((e) => {
      console.error('[seed] failed:', e);
      process.exitCode = 1;
    })
    .finally(() => closeDb());
}
