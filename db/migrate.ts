/**
 * Migrates a database with the owner account, then gives the runtime account
 * table-level rights: SELECT/INSERT/UPDATE/DELETE in general, only SELECT/INSERT on the
 * append-only tables, nothing on the migration bookkeeping. The runtime account holds no
 * DROP, ALTER, TRIGGER or database-level privilege, so it can neither TRUNCATE nor drop
 * the triggers that keep the audit trail append-only.
 *   tsx db/migrate.ts            # migrates DRUMLINE_DB_NAME (or DATABASE_OWNER_URL's database)
 */
import knexFactory, { type Knex } from 'knex';
import { dbSettings, knexConfig } from './config';
import { appendOnlyTables, migrationSource } from './migrations/index';

export async function applyRuntimeGrants(owner: Knex, database: string): Promise<void> {
  const rt = dbSettings('runtime');
  const host = process.env.DRUMLINE_DB_GRANT_HOST ?? '127.0.0.1';
  const rows = (await owner.raw(
    'SELECT table_name AS t FROM information_schema.tables WHERE table_schema = ? AND table_type = ?',
    [database, 'BASE TABLE'],
  )) as [{ t: string }[]];
  for (const { t } of rows[0]) {
    if (t.startsWith('knex_migrations')) continue;
    const privs = appendOnlyTables.includes(t) ? 'SELECT, INSERT' : 'SELECT, INSERT, UPDATE, DELETE';
    await owner.raw(`GRANT ${privs} ON \`${database}\`.\`${t}\` TO ?@?`, [rt.user, host]);
  }
}

export async function migrateDatabase(database?: string): Promise<void> {
  const s = dbSettings('owner', database);
  const owner = knexFactory(knexConfig(s, { min: 0, max: 2 }));
  try {
    await owner.migrate.latest({ migrationSource });
    await applyRuntimeGrants(owner, s.database);
  } finally {
    await owner.destroy();
  }
}

/** Drops and recreates a database (tests and demo reset only). */
export async function recreateDatabase(database: string): Promise<void> {
  if (!/^drumline[a-z0-9_]*$/.test(database)) throw new Error(`refusing to recreate database ${database}`);
  const s = dbSettings('owner', database);
  const owner = knexFactory(knexConfig({ ...s, database: '' }, { min: 0, max: 1 }));
  try {
    await owner.raw(`DROP DATABASE IF EXISTS \`${database}\``);
    await owner.raw(`CREATE DATABASE \`${database}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
  } finally {
    await owner.destroy();
  }
}

/** Drops a database (test runs clean up after themselves). */
export async function dropDatabase(database: string): Promise<void> {
  if (!/^drumline_[a-z0-9_]+$/.test(database) || database === 'drumline')
    throw new Error(`refusing to drop database ${database}`);
  const s = dbSettings('owner', database);
  const owner = knexFactory(knexConfig({ ...s, database: '' }, { min: 0, max: 1 }));
  try {
    await owner.raw(`DROP DATABASE IF EXISTS \`${database}\``);
  } finally {
    await owner.destroy();
  }
}

const isMain = process.argv[1] && import.meta.url.endsWith(process.argv[1].replace(/\\/g, '/').split('/').pop()!);
if (isMain) {
  migrateDatabase()
    .then(() => console.log('[migrate] database is up to date'))
    .catch((e) => {
      console.error('[migrate] failed:', e instanceof Error ? e.message : e);
      process.exit(1);
    });
}
