/**
 * The table types are the schema's (docs/architecture.md, "Typed tables"): server/lib/db-tables.ts is
 * what `npm run db:types` writes from the migrated test database, so a migration that adds, drops or
 * retypes a column fails here until its types are regenerated in the same commit.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { repoRoot } from '../../db/config';
import { TABLE_TYPES_FILE, formattedTableTypes, insertType, tsType } from '../../db/table-types';
import { TEST_DB } from './db-name';
import { ownerDb } from './helpers';

const owner = ownerDb();
afterAll(() => owner.destroy());

describe('table types', () => {
  it('server/lib/db-tables.ts is the migrated schema, generated', async () => {
    const committed = fs.readFileSync(path.join(repoRoot, TABLE_TYPES_FILE), 'utf8');
    const generated = await formattedTableTypes(owner, TEST_DB, repoRoot);
    expect(committed, 'server/lib/db-tables.ts is stale: run `npm run migrate && npm run db:types`').toBe(generated);
  });

  it('declares every table, and append-only tables refuse updates at compile time', async () => {
    const text = fs.readFileSync(path.join(repoRoot, TABLE_TYPES_FILE), 'utf8');
    const [rows] = (await owner.raw(
      "SELECT table_name AS t FROM information_schema.tables WHERE table_schema = ? AND table_type = 'BASE TABLE' AND table_name NOT LIKE 'knex\\_migrations%'",
      [TEST_DB],
    )) as [{ t: string }[]];
    expect(rows.length).toBeGreaterThan(50);
    for (const { t } of rows) expect(text, t).toMatch(new RegExp(`^    ${t}: Knex\\.CompositeTableType<`, 'm'));
    expect(text).toMatch(/^ {4}audit_event: Knex\.CompositeTableType<AuditEventRow, AuditEventInsert, never>;$/m);
    expect(text).toMatch(/^ {4}lot: Knex\.CompositeTableType<LotRow, LotInsert, Partial<LotInsert>>;$/m);
  });

  it('maps column types as mysql2 returns them (db/config.ts connection settings)', () => {
    expect(tsType('int', 'int(10) unsigned')).toBe('number');
    expect(tsType('decimal', 'decimal(6,4)')).toBe('string');
    expect(tsType('datetime', 'datetime(3)')).toBe('Date');
    expect(tsType('varbinary', 'varbinary(32)')).toBe('Buffer');
    expect(tsType('enum', "enum('open','it''s closed')")).toBe('"open" | "it\'s closed"');
    expect(tsType('longtext', 'longtext')).toBe('string');
    expect(insertType('date', 'date')).toBe('Date | string');
    expect(insertType('tinyint', 'tinyint(1)')).toBe('number | boolean');
    expect(insertType('tinyint', 'tinyint(4)')).toBe('number');
  });
});
