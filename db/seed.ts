/**
 * Seeds the demo site into the configured database (idempotent: existing records are kept).
 *   tsx db/seed.ts
 */
import { closeDb, initDb } from '../server/lib/db';
import { seedAccounts } from './seeds/accounts';

export async function seedDemo(database?: string): Promise<void> {
  const db = initDb(database);
  await seedAccounts(db);
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
