/**
 * After the browser tests: drop this run's databases and its client build folder, so runs leave
 * nothing behind (KEEP_E2E_DB=1 keeps them for a look after a failure).
 */
import { rm } from 'node:fs/promises';
import path from 'node:path';
import { dropDatabase } from '../db/migrate';
import { repoRoot } from '../db/config';

export default async function teardown(): Promise<void> {
  if (process.env.KEEP_E2E_DB) return;
  const db = process.env.DRUMLINE_E2E_DB;
  if (db) {
    await dropDatabase(db).catch(() => undefined);
    await dropDatabase(`${db}_demo`).catch(() => undefined);
  }
  if (process.env.E2E_PORT)
    await rm(path.join(repoRoot, 'dist-e2e', process.env.E2E_PORT), { recursive: true, force: true });
}
