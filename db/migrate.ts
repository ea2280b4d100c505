/**
 * Migrates a database with the owner account, then gives the runtime account table-level
 * rights by the table's class (db/migrations/index.ts): SELECT/INSERT on append-only tables,
 * SELECT/INSERT/UPDATE on guarded ones, SELECT/INSERT/UPDATE/DELETE on operational state,
 * nothing on the migration bookkeeping. The runtime account holds no
 * DROP, ALTER, TRIGGER or database-level privilege, so it can neither TRUNCATE nor drop
 * the triggers that keep the audit trail append-only.
 *   tsx db/migrate.ts            # migrates DRUMLINE_DB_NAME (or DATABASE_OWNER_URL's database)
 */
import fs from 'node:fs';
import path from 'node:path';
import knexFactory, { type Knex } from 'knex';
import { dbSettings, knexConfig, repoRoot } from './config';
import { appendOnlyTables, guardedTables, migrationSource, operationalTables } from './migrations/index';

/** The runtime account's rights on a table, from its class in db/migrations/index.ts. */
export function runtimePrivileges(table: string): string[] {
  if (appendOnlyTables.includes(table)) return ['SELECT', 'INSERT'];
  if (guardedTables.includes(table)) return ['SELECT', 'INSERT', 'UPDATE'];
  if (table in operationalTables) return ['SELECT', 'INSERT', 'UPDATE', 'DELETE'];
  // Not classified yet: the rights tables had before classes existed, so the feature that added it
  // keeps working; tests/api/db-protection.test.ts fails until db/migrations/index.ts classifies it.
  console.warn(`[migrate] table ${table} is not classified in db/migrations/index.ts`);
  return ['SELECT', 'INSERT', 'UPDATE', 'DELETE'];
}

export async function applyRuntimeGrants(owner: Knex, database: string): Promise<void> {
  const rt = dbSettings('runtime');
  const host = process.env.DRUMLINE_DB_GRANT_HOST ?? '127.0.0.1';
  const rows = (await owner.raw(
    'SELECT table_name AS t FROM information_schema.tables WHERE table_schema = ? AND table_type = ?',
    [database, 'BASE TABLE'],
  )) as [{ t: string }[]];
  for (const { t } of rows[0]) {
    if (t.startsWith('knex_migrations')) continue;
    // Revoke first: a table that moved to a stricter class loses the rights it had.
    await owner
      .raw(`REVOKE ALL PRIVILEGES ON \`${database}\`.\`${t}\` FROM ?@?`, [rt.user, host])
      .catch(() => undefined);
    await owner.raw(`GRANT ${runtimePrivileges(t).join(', ')} ON \`${database}\`.\`${t}\` TO ?@?`, [rt.user, host]);
  }
  // The readiness probe (GET /api/ready) compares the applied migrations with the server's list:
  // read-only on the bookkeeping table, nothing on its lock table.
  await owner.raw(`GRANT SELECT ON \`${database}\`.\`knex_migrations\` TO ?@?`, [rt.user, host]);
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

/**
 * A dropped development database takes its audit checkpoints with it (docs/compliance.md, "Audit
 * chain anchored outside the database"): the files in AUDIT_CHECKPOINT_DIR/<database>/ describe a
 * trail that no longer exists, and a new trail of the same name would be held against them.
 * Only recreateDatabase and dropDatabase call this, and they refuse every name but drumline*.
 */
function discardCheckpoints(database: string): void {
  const dir = path.resolve(repoRoot, process.env.AUDIT_CHECKPOINT_DIR ?? '.data/checkpoints', database);
  fs.rmSync(dir, { recursive: true, force: true });
}

/** Drops and recreates a database (tests and demo reset only). */
export async function recreateDatabase(database: string): Promise<void> {
  if (!/^drumline[a-z0-9_]*$/.test(database)) throw new Error(`refusing to recreate database ${database}`);
  const s = dbSettings('owner', database);
  const owner = knexFactory(knexConfig({ ...s, database: '' }, { min: 0, max: 1 }));
  try {
    await owner.raw(`DROP DATABASE IF EXISTS \`${database}\``);
    discardCheckpoints(database);
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
    discardCheckpoints(database);
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
