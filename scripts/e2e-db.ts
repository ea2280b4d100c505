/**
 * Fresh database for the browser tests: drops and recreates `drumline_e2e` (or DRUMLINE_DB_NAME
 * when it names another drumline_* database), migrates it and seeds the demo accounts.
 *   tsx scripts/e2e-db.ts
 */
import { migrateDatabase, recreateDatabase } from '../db/migrate';
import { seedAccounts } from '../db/seeds/accounts';

const database = process.env.DRUMLINE_E2E_DB ?? 'drumline_e2e';

async function main(): Promise<void> {
  await recreateDatabase(database);
  await migrateDatabase(database);
  await seedAccounts(database);
}

main()
  .then(() => console.log(`[e2e-db] ${database} recreated, migrated and seeded`))
  .catch((e) => {
    console.error('[e2e-db] failed:', e instanceof Error ? e.message : e);
    process.exitCode = 1;
  });
