/**
 * API tests run against a real MariaDB: the project's private server (db/mariadb.sh) and a
 * database created fresh for each run, migrated with the owner account. The application
 * then connects with the restricted runtime account, exactly as in production.
 */
import { execFileSync } from 'node:child_process';
import path from 'node:path';
import { repoRoot } from '../../db/config';
import { dropDatabase, migrateDatabase, recreateDatabase } from '../../db/migrate';
import { TEST_DB } from './db-name';

export default async function setup(): Promise<() => Promise<void>> {
  if (!process.env.DATABASE_URL) {
    execFileSync('bash', [path.join(repoRoot, 'db', 'mariadb.sh'), 'start'], { stdio: 'inherit' });
  }
  await recreateDatabase(TEST_DB);
  await migrateDatabase(TEST_DB);
  return async () => {
    if (!process.env.KEEP_TEST_DB) await dropDatabase(TEST_DB);
  };
}
