/**
 * Resets the demo database to its initial state: drops and recreates it, migrates it (which
 * also applies the runtime account's grants) and seeds the demo accounts and the demo site.
 *   tsx scripts/demo-reset.ts [--force]
 * Refuses when the database holds material grades that are not the demo's (real data), unless
 * --force is given: GMP records are never deleted, and a reset deletes everything.
 */
import knexFactory from 'knex';
import { dbSettings, knexConfig } from '../db/config';
import { migrateDatabase, recreateDatabase } from '../db/migrate';
import { seedDemo } from '../db/seed';
import { DEMO_MATERIAL_CODES } from '../db/seeds/demo';
import { closeDb } from '../server/lib/db';

async function foreignMaterials(database: string): Promise<string[]> {
  const owner = knexFactory(knexConfig(dbSettings('owner', database), { min: 0, max: 1 }));
  try {
    const exists = await owner.raw(
      'SELECT 1 FROM information_schema.tables WHERE table_schema = ? AND table_name = ?',
      [database, 'material'],
    );
    if (!(exists[0] as unknown[]).length) return [];
    const rows: { code: string }[] = await owner('material').select('code');
    return rows.map((r) => r.code).filter((c) => !DEMO_MATERIAL_CODES.includes(c));
  } catch (e) {
    if ((e as { code?: string }).code === 'ER_BAD_DB_ERROR') return [];
    throw e;
  } finally {
    await owner.destroy();
  }
}

async function main(): Promise<void> {
  const database = dbSettings('owner').database;
  const force = process.argv.includes('--force');
  const foreign = await foreignMaterials(database);
  if (foreign.length && !force) {
    throw new Error(
      `database ${database} holds material grades that are not demo data (${foreign.slice(0, 5).join(', ')}${foreign.length > 5 ? ', ...' : ''}); ` +
        'a reset would delete them. Point DRUMLINE_DB_NAME at the demo database, or run with --force if this really is a demo.',
    );
  }
  console.log(`[demo-reset] dropping and recreating ${database}`);
  await recreateDatabase(database);
  await migrateDatabase(database);
  await seedDemo(database);
  console.log(`[demo-reset] ${database} holds the demo site in its initial state`);
}

main()
  .catch((e) => {
    console.error('[demo-reset] failed:', e instanceof Error ? e.message : e);
    process.exitCode = 1;
  })
  .finally(() => closeDb());
