/**
 * Backup and restore round trip (issue 13 item 1), through the commands a site runs: the demo
 * site is seeded into a database of its own, `npm run backup` writes the dated folder, the
 * database is destroyed, `npm run restore` brings it back, and the restored database is proved
 * identical: every table's row count and CHECKSUM TABLE value (the audit trail plus exactly the
 * restore event), the triggers, the runtime account's grants, the audit chain, every certificate
 * and every stored file. The restore event is signed with the site's key. Refused: a damaged
 * backup, a restore over a database that holds tables, keys stored inside the backup folder.
 */
import { execFile } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { promisify } from 'node:util';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import knexFactory, { type Knex } from 'knex';
import { dbSettings, knexConfig, repoRoot } from '../../db/config';
import { dropDatabase, migrateDatabase, recreateDatabase } from '../../db/migrate';
import { backupKeys, readManifest, tableFacts, triggersOf, verifyRestoreEvent } from '../../server/ops/backup';
import { checkRecords } from '../../server/ops/record-checks';
import { TEST_DB } from './db-name';
import { untyped } from './helpers';

const run = promisify(execFile);
const SRC = `${TEST_DB}_bk`;
const tmp = fs.mkdtempSync(path.join(os.tmpdir(), 'drumline-backup-test-'));

function tsx(script: string, args: string[], env: Record<string, string> = {}) {
  return run(process.execPath, ['--import', 'tsx', path.join(repoRoot, script), ...args], {
    cwd: repoRoot,
    env: { ...process.env, VITEST: '', LOG_LEVEL: 'warn', DRUMLINE_DB_NAME: SRC, ...env },
    maxBuffer: 20 * 1024 * 1024,
  });
}

const owner = (): Knex => knexFactory(knexConfig(dbSettings('owner', SRC), { min: 0, max: 2 }));

/** The runtime account's grants on the database, as it sees them itself (SHOW GRANTS). */
async function runtimeGrants(): Promise<string[]> {
  const rt = knexFactory(knexConfig(dbSettings('runtime', SRC), { min: 0, max: 1 }));
  try {
    const [rows] = (await rt.raw('SHOW GRANTS')) as [Record<string, string>[]];
    return rows
      .map((r) => Object.values(r)[0])
      .filter((g) => g.includes(`\`${SRC}\``))
      .sort();
  } finally {
    await rt.destroy();
  }
}

let before: Awaited<ReturnType<typeof tableFacts>>;
let beforeTriggers: string[];
let beforeGrants: string[];
let folder: string;

beforeAll(async () => {
  await recreateDatabase(SRC);
  await migrateDatabase(SRC);
  await tsx('db/seed.ts', []);
  const k = owner();
  try {
    before = await tableFacts(k, SRC);
    beforeTriggers = await triggersOf(k, SRC);
    beforeGrants = await runtimeGrants();
  } finally {
    await k.destroy();
  }
}, 240_000);

afterAll(async () => {
  await dropDatabase(SRC).catch(() => undefined);
  fs.rmSync(tmp, { recursive: true, force: true });
});

describe('backup, destroy, restore', () => {
  it('npm run backup writes a dated folder with a manifest of SHA-256 sums and exact counts', async () => {
    expect(before.tables.certificate.rows, 'the demo site has certificates').toBeGreaterThan(0);
    expect(before.tables.stored_file.rows).toBeGreaterThan(0);
    const t0 = Date.now();
    const out = await tsx('scripts/backup.ts', ['--dir', tmp]);
    const ms = Date.now() - t0;
    folder = /\[backup\] (\/\S+)/.exec(out.stdout)![1];
    expect(path.basename(folder)).toMatch(new RegExp(`^drumline-${SRC}-\\d{8}T\\d{6}Z$`));
    const m = await readManifest(folder);
    expect(m.exact).toBe(true);
    expect(m.tables).toEqual(before.tables);
    expect(m.auditHead).toEqual(before.auditHead);
    expect(m.triggers).toEqual(beforeTriggers);
    expect(Object.keys(m.files)).toEqual(['dump.sql.gz']);
    expect(m.files['dump.sql.gz'].sha256).toMatch(/^[0-9a-f]{64}$/);
    // Keys are never beside the dump.
    expect(fs.readdirSync(folder).sort()).toEqual(['dump.sql.gz', 'manifest.json']);
    const n = (t: string) => m.tables[t].rows;
    console.log(
      `[backup-restore] demo site: ${n('lot')} lots, ${n('stored_file')} stored files, ${n('certificate')} certificates, ` +
        `${n('audit_event')} audit events, dump ${(m.files['dump.sql.gz'].bytes / 1e6).toFixed(1)} MB; ` +
        `backup ${m.durationMs} ms in the tool, ${ms} ms for the command`,
    );
  }, 120_000);

  it('refuses to restore over a database that holds tables, and changes nothing there', async () => {
    await expect(tsx('scripts/restore.ts', [folder])).rejects.toMatchObject({
      stderr: expect.stringMatching(/holds \d+ tables; a restore goes into a fresh database/),
    });
    const k = owner();
    try {
      expect((await tableFacts(k, SRC)).tables).toEqual(before.tables);
    } finally {
      await k.destroy();
    }
  });

  it('refuses a damaged backup before touching any database', async () => {
    const copy = path.join(tmp, 'damaged');
    fs.cpSync(folder, copy, { recursive: true });
    const dump = path.join(copy, 'dump.sql.gz');
    const bytes = fs.readFileSync(dump);
    bytes[bytes.length >> 1] ^= 0xff;
    fs.writeFileSync(dump, bytes);
    const target = `${SRC}_damaged`;
    await expect(tsx('scripts/restore.ts', [copy, '--database', target])).rejects.toMatchObject({
      stderr: expect.stringMatching(/damaged or was changed: dump\.sql\.gz does not match its recorded SHA-256/),
    });
    const k = owner();
    try {
      const [rows] = (await k.raw('SELECT schema_name FROM information_schema.schemata WHERE schema_name = ?', [
        target,
      ])) as [unknown[]];
      expect(rows).toHaveLength(0);
    } finally {
      await k.destroy();
    }
  });

  it('refuses to store the keys inside a backup folder; stores them apart with their sums', () => {
    expect(() => backupKeys(path.join(folder, 'keys'))).toThrow(/inside a database backup folder/);
    const k = backupKeys(path.join(tmp, 'keys'));
    expect(k.files).toContain('signing.p12');
    expect(fs.existsSync(path.join(k.folder, 'keys-manifest.json'))).toBe(true);
  });

  it('after the database is destroyed, npm run restore brings back every row, trigger and grant, and proves the records', async () => {
    await dropDatabase(SRC);
    const t0 = Date.now();
    const out = await tsx('scripts/restore.ts', [folder]);
    const rto = Date.now() - t0;
    expect(out.stdout).toMatch(/audit chain intact/);
    const k = owner();
    try {
      const after = await tableFacts(k, SRC);
      // Identical, but for the one restore event appended to the trail (and the head that points at it).
      const strip = (t: Record<string, { rows: number; checksum: string | null }>) =>
        Object.fromEntries(Object.entries(t).filter(([n]) => n !== 'audit_event' && n !== 'audit_head'));
      expect(strip(after.tables)).toEqual(strip(before.tables));
      expect(after.tables.audit_event.rows).toBe(before.tables.audit_event.rows + 1);
      expect(after.auditHead.lastId).toBe(before.auditHead.lastId + 1);
      expect(await triggersOf(k, SRC)).toEqual(beforeTriggers);
      expect(await runtimeGrants()).toEqual(beforeGrants);
      expect(beforeGrants.length).toBeGreaterThan(20);

      const checks = await checkRecords(k);
      expect(checks.chain.ok, JSON.stringify(checks.chain)).toBe(true);
      expect(checks.certificates.problems).toEqual([]);
      expect(checks.certificates.checked).toBe(before.tables.certificate.rows);
      expect(checks.files.problems).toEqual([]);
      expect(checks.files.checked).toBe(before.tables.stored_file.rows);

      const ev = (await k('audit_event').orderBy('id', 'desc').first())!;
      expect(ev.action).toBe('system.restored');
      const content = JSON.parse(ev.after_json!);
      expect(content.backup.auditHead).toEqual(before.auditHead);
      expect(content.checks).toBe('all passed');
      expect(verifyRestoreEvent(content)).toBe(true);
      expect(verifyRestoreEvent({ ...content, checks: 'edited later' })).toBe(false);
      console.log(`[backup-restore] restore of the demo site (load, grants, checks, event): ${rto} ms`);
    } finally {
      await k.destroy();
    }
  }, 240_000);

  it('the runtime account of the restored database still cannot rewrite the trail', async () => {
    const rt = knexFactory(knexConfig(dbSettings('runtime', SRC), { min: 0, max: 1 }));
    try {
      await expect(untyped(rt, 'audit_event').where({ id: 1 }).update({ actor_name: 'x' })).rejects.toMatchObject({
        code: 'ER_TABLEACCESS_DENIED_ERROR',
      });
      await expect(rt.raw('TRUNCATE TABLE audit_event')).rejects.toMatchObject({
        code: expect.stringMatching(/DENIED/),
      });
    } finally {
      await rt.destroy();
    }
  });
});
