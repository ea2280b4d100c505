/**
 * `npm run db:types`: writes server/lib/db-tables.ts, the row types of every table, from the schema
 * of the configured database (db/table-types.ts). Migrate first (`npm run migrate`); a migration and
 * its regenerated types land in one commit (tests/api/db-types.test.ts).
 */
import fs from 'node:fs';
import path from 'node:path';
import knexFactory from 'knex';
import { dbSettings, knexConfig, repoRoot } from '../db/config';
import { TABLE_TYPES_FILE, formattedTableTypes } from '../db/table-types';

async function main(): Promise<void> {
  const s = dbSettings('owner');
  const knex = knexFactory(knexConfig(s, { min: 0, max: 1 }));
  try {
    const text = await formattedTableTypes(knex, s.database, repoRoot);
    fs.writeFileSync(path.join(repoRoot, TABLE_TYPES_FILE), text);
    console.log(`[db:types] ${TABLE_TYPES_FILE}: ${(text.match(/^export interface \w+Row /gm) ?? []).length} tables`);
  } finally {
    await knex.destroy();
  }
}

main().catch((e) => {
  console.error('[db:types] failed:', e instanceof Error ? e.message : e);
  process.exit(1);
});
