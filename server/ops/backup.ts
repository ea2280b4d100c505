/**
 * Backup and restore of a Drumline database (docs/operations.md, "Backup and restore").
 *
 * Backup: MariaDB's own mariadb-dump with --single-transaction (one consistent InnoDB snapshot,
 * no table locks, so it also runs against a Galera node) into a dated folder, gzip-compressed,
 * with manifest.json: the SHA-256 and size of every file, the migrations, the triggers, every
 * table's row count and CHECKSUM TABLE value, the audit head, and how long it took. The row
 * counts are read in a consistent snapshot before and after the dump; when both agree nothing
 * was written meanwhile and they are exact for the dump (`exact: true`).
 * The signing key and the audit-chain key (the .keys folder, or SIGNING_P12_PATH) are never
 * written beside the dump: backupKeys() copies them to a folder of their own.
 *
 * Restore: checks every file of the folder against the manifest, refuses a database that holds
 * tables, loads the dump with the mariadb client, re-grants the runtime account by table class
 * (db/migrate.ts), then proves the result: migrations and triggers as recorded, row counts and
 * checksums as recorded (when exact), the audit chain intact, every certificate verifies, every
 * stored file hashes to its recorded SHA-256. Last it appends a restore event to the audit
 * trail, signed with the site's signing key, that names the backup and the audit head it held,
 * so a later chain check can tell events lost with the restore from removed ones.
 */
import { spawn } from 'node:child_process';
import crypto from 'node:crypto';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { pipeline } from 'node:stream/promises';
import zlib from 'node:zlib';
import knexFactory, { type Knex } from 'knex';
import { dbSettings, knexConfig, repoRoot, type DbSettings } from '../../db/config';
import { applyRuntimeGrants } from '../../db/migrate';
import { migrations } from '../../db/migrations/index';
import { appendAudit } from '../lib/audit';
import { canonicalJson } from '../lib/canonical';
import { loadConfig } from '../lib/config';
import { loadSigningMaterial, signingSettingsFrom } from '../lib/signing';
import { checkRecords, type RecordCheck } from './record-checks';

export const MANIFEST = 'manifest.json';
const DUMP = 'dump.sql.gz';

export interface TableFacts {
  rows: number;
  checksum: string | null;
}

export interface BackupManifest {
  format: 'drumline-backup/1';
  database: string;
  takenAt: string;
  finishedAt: string;
  durationMs: number;
  serverVersion: string;
  method: string;
  /** Row counts equal before and after the dump: counts and checksums are exact for it. */
  exact: boolean;
  migrations: string[];
  triggers: string[];
  tables: Record<string, TableFacts>;
  auditHead: { lastId: number; lastHash: string };
  files: Record<string, { sha256: string; bytes: number }>;
}

const sha256File = async (file: string): Promise<string> => {
  const h = crypto.createHash('sha256');
  await pipeline(fs.createReadStream(file), h);
  return h.digest('hex');
};

function ownerKnex(database: string): Knex {
  return knexFactory(knexConfig(dbSettings('owner', database), { min: 0, max: 2 }));
}

/** A client options file (mode 0600, removed afterwards): the password never appears in a process list. */
async function withClientOptions<T>(s: DbSettings, run: (file: string) => Promise<T>): Promise<T> {
  const dir = fs.mkdtempSync(path.join(os.tmpdir(), 'drumline-client-'));
  const file = path.join(dir, 'client.cnf');
  fs.writeFileSync(
    file,
    `[client]\nhost=${s.host}\nport=${s.port}\nuser=${s.user}\npassword=${s.password}\ndefault-character-set=utf8mb4\n`,
    { mode: 0o600 },
  );
  try {
    return await run(file);
  } finally {
    fs.rmSync(dir, { recursive: true, force: true });
  }
}

/** Runs a MariaDB client tool with its stdin fed and/or its stdout consumed; rejects with its stderr on failure. */
function runTool(
  cmd: string,
  args: string[],
  io: {
    feed?: (stdin: NodeJS.WritableStream) => Promise<unknown>;
    drain?: (stdout: NodeJS.ReadableStream) => Promise<unknown>;
  } = {},
): Promise<void> {
  return new Promise((resolve, reject) => {
    const child = spawn(cmd, args, { stdio: [io.feed ? 'pipe' : 'ignore', io.drain ? 'pipe' : 'ignore', 'pipe'] });
    let err = '';
    child.stderr!.on('data', (d: Buffer) => (err += d.toString()));
    child.on('error', reject);
    const piping: Promise<unknown>[] = [];
    if (io.feed) piping.push(io.feed(child.stdin!));
    if (io.drain) piping.push(io.drain(child.stdout!));
    child.on('close', (code) => {
      Promise.all(piping)
        .then(() =>
          code === 0 ? resolve() : reject(new Error(`${cmd} exited with ${code}: ${err.trim().slice(0, 500)}`)),
        )
        .catch(reject);
    });
  });
}

async function baseTables(k: Knex, database: string): Promise<string[]> {
  const [rows] = (await k.raw(
    "SELECT table_name AS t FROM information_schema.tables WHERE table_schema = ? AND table_type = 'BASE TABLE' ORDER BY table_name",
    [database],
  )) as [{ t: string }[]];
  return rows.map((r) => r.t);
}

export async function triggersOf(k: Knex, database: string): Promise<string[]> {
  const [rows] = (await k.raw(
    'SELECT trigger_name AS t FROM information_schema.triggers WHERE trigger_schema = ? ORDER BY trigger_name',
    [database],
  )) as [{ t: string }[]];
  return rows.map((r) => r.t);
}

/** Row counts, table checksums and the audit head, all read in one consistent snapshot. */
export async function tableFacts(
  k: Knex,
  database: string,
): Promise<{ tables: Record<string, TableFacts>; auditHead: { lastId: number; lastHash: string } }> {
  const names = await baseTables(k, database);
  return k.transaction(async (trx) => {
    const tables: Record<string, TableFacts> = {};
    for (const t of names) {
      // COUNT(*) always answers one row
      const c = await trx(t).count({ n: '*' }).first();
      tables[t] = { rows: Number(c?.n ?? 0), checksum: null };
    }
    const head = await trx('audit_head').where({ id: 1 }).first();
    // CHECKSUM TABLE reads outside the snapshot; it is compared only when the counts show no writes.
    for (const t of names) {
      const [[r]] = (await trx.raw(`CHECKSUM TABLE \`${t}\``)) as [{ Checksum: number | string | null }[]];
      tables[t].checksum = r?.Checksum === null || r?.Checksum === undefined ? null : String(r.Checksum);
    }
    return { tables, auditHead: { lastId: Number(head?.last_id ?? 0), lastHash: String(head?.last_hash ?? '') } };
  });
}

const sameCounts = (a: Record<string, TableFacts>, b: Record<string, TableFacts>) =>
  JSON.stringify(Object.entries(a).map(([k, v]) => [k, v.rows])) ===
  JSON.stringify(Object.entries(b).map(([k, v]) => [k, v.rows]));

function stamp(d: Date): string {
  return d
    .toISOString()
    .replace(/[-:]/g, '')
    .replace(/\.\d+Z$/, 'Z');
}

export interface BackupOptions {
  database?: string;
  /** Parent folder; the backup goes into <dir>/drumline-<database>-<UTC time>. Default BACKUP_DIR or .data/backups. */
  dir?: string;
}

export async function backup(opts: BackupOptions = {}): Promise<{ folder: string; manifest: BackupManifest }> {
  const s = dbSettings('owner', opts.database);
  const started = new Date();
  const parent = path.resolve(repoRoot, opts.dir ?? process.env.BACKUP_DIR ?? '.data/backups');
  const folder = path.join(parent, `drumline-${s.database}-${stamp(started)}`);
  fs.mkdirSync(folder, { recursive: true, mode: 0o700 });
  const k = ownerKnex(s.database);
  try {
    const before = await tableFacts(k, s.database);
    await withClientOptions(s, (cnf) =>
      runTool(
        'mariadb-dump',
        [
          `--defaults-file=${cnf}`,
          '--single-transaction',
          '--skip-lock-tables',
          '--quick',
          '--hex-blob',
          '--triggers',
          '--no-tablespaces',
          '--default-character-set=utf8mb4',
          s.database,
        ],
        {
          drain: (out) =>
            pipeline(
              out,
              zlib.createGzip({ level: 6 }),
              fs.createWriteStream(path.join(folder, DUMP), { mode: 0o600 }),
            ),
        },
      ),
    );
    const after = await tableFacts(k, s.database);
    const [[v]] = (await k.raw('SELECT VERSION() AS v')) as [{ v: string }[]];
    const migrationRows: { name: string }[] = await k('knex_migrations').orderBy('id').select('name');
    const finished = new Date();
    const manifest: BackupManifest = {
      format: 'drumline-backup/1',
      database: s.database,
      takenAt: started.toISOString(),
      finishedAt: finished.toISOString(),
      durationMs: finished.getTime() - started.getTime(),
      serverVersion: v.v,
      method: 'mariadb-dump --single-transaction --hex-blob --triggers, gzip',
      exact: sameCounts(before.tables, after.tables) && before.auditHead.lastId === after.auditHead.lastId,
      migrations: migrationRows.map((r) => r.name),
      triggers: await triggersOf(k, s.database),
      tables: before.tables,
      auditHead: before.auditHead,
      files: {},
    };
    const dumpPath = path.join(folder, DUMP);
    manifest.files[DUMP] = { sha256: await sha256File(dumpPath), bytes: fs.statSync(dumpPath).size };
    fs.writeFileSync(path.join(folder, MANIFEST), JSON.stringify(manifest, null, 2) + '\n', { mode: 0o600 });
    return { folder, manifest };
  } finally {
    await k.destroy();
  }
}

export async function readManifest(folder: string): Promise<BackupManifest> {
  const file = path.join(folder, MANIFEST);
  if (!fs.existsSync(file)) throw new Error(`${folder} holds no ${MANIFEST}: not a Drumline backup folder.`);
  const m = JSON.parse(fs.readFileSync(file, 'utf8')) as BackupManifest;
  if (m.format !== 'drumline-backup/1') throw new Error(`unknown backup format ${String(m.format)}`);
  return m;
}

/** Every file of the manifest is present with its recorded size and SHA-256. */
export async function verifyBackupFolder(folder: string): Promise<string[]> {
  const m = await readManifest(folder);
  const problems: string[] = [];
  for (const [name, f] of Object.entries(m.files)) {
    const p = path.join(folder, name);
    if (!fs.existsSync(p)) {
      problems.push(`${name} is missing`);
      continue;
    }
    if (fs.statSync(p).size !== f.bytes) problems.push(`${name} has another size than recorded`);
    else if ((await sha256File(p)) !== f.sha256) problems.push(`${name} does not match its recorded SHA-256`);
  }
  return problems;
}

export interface RestoreReport {
  database: string;
  durationMs: number;
  loadMs: number;
  checks: RecordCheck;
  problems: string[];
  restoreEventId: number;
}

export interface RestoreOptions {
  folder: string;
  /** Target database (default: the one backed up); must not exist or hold no table. */
  database?: string;
}

export async function restore(opts: RestoreOptions): Promise<RestoreReport> {
  const t0 = Date.now();
  const manifest = await readManifest(opts.folder);
  const damaged = await verifyBackupFolder(opts.folder);
  if (damaged.length)
    throw new Error(`the backup is damaged or was changed: ${damaged.join('; ')}. Nothing was restored.`);
  const database = opts.database ?? manifest.database;
  if (!/^drumline[a-z0-9_]*$/.test(database)) throw new Error(`refusing to restore into database ${database}`);
  const s = dbSettings('owner', database);
  const server = knexFactory(knexConfig({ ...s, database: '' }, { min: 0, max: 1 }));
  try {
    const [[exists]] = (await server.raw(
      "SELECT COUNT(*) AS n FROM information_schema.tables WHERE table_schema = ? AND table_type = 'BASE TABLE'",
      [database],
    )) as [{ n: number }[]];
    if (Number(exists.n) > 0)
      throw new Error(
        `database ${database} holds ${exists.n} tables; a restore goes into a fresh database (records are never overwritten). Nothing was restored.`,
      );
    await server.raw(`CREATE DATABASE IF NOT EXISTS \`${database}\` CHARACTER SET utf8mb4 COLLATE utf8mb4_unicode_ci`);
  } finally {
    await server.destroy();
  }
  const tLoad = Date.now();
  await withClientOptions(s, (cnf) =>
    runTool('mariadb', [`--defaults-file=${cnf}`, '--binary-mode', database], {
      feed: (stdin) => pipeline(fs.createReadStream(path.join(opts.folder, DUMP)), zlib.createGunzip(), stdin),
    }),
  );
  const loadMs = Date.now() - tLoad;
  const k = ownerKnex(database);
  try {
    await applyRuntimeGrants(k, database);
    const problems: string[] = [];
    const migrationNames: { name: string }[] = await k('knex_migrations').orderBy('id').select('name');
    const names = migrationNames.map((r) => r.name);
    if (JSON.stringify(names) !== JSON.stringify(manifest.migrations))
      problems.push('migrations differ from the backup');
    const known = migrations.map(([n]) => n);
    const unknown = names.filter((n) => !known.includes(n));
    if (unknown.length) problems.push(`the backup has migrations this release does not know: ${unknown.join(', ')}`);
    const triggers = await triggersOf(k, database);
    if (JSON.stringify(triggers) !== JSON.stringify(manifest.triggers))
      problems.push(`triggers differ from the backup (${triggers.length} found, ${manifest.triggers.length} recorded)`);
    const facts = await tableFacts(k, database);
    for (const [t, f] of Object.entries(manifest.tables)) {
      const got = facts.tables[t];
      if (!got) problems.push(`table ${t} is missing`);
      else if (manifest.exact && got.rows !== f.rows) problems.push(`table ${t}: ${got.rows} rows, ${f.rows} recorded`);
      else if (manifest.exact && f.checksum !== null && got.checksum !== f.checksum)
        problems.push(`table ${t}: checksum differs from the backup`);
    }
    if (manifest.exact && facts.auditHead.lastId !== manifest.auditHead.lastId)
      problems.push('the audit head differs from the backup');
    const checks = await checkRecords(k);
    if (!checks.chain.ok) problems.push(`audit chain: ${checks.chain.problem}`);
    problems.push(...checks.certificates.problems, ...checks.files.problems);
    const restoreEventId = await recordRestoreEvent(k, manifest, opts.folder, problems, Date.now() - t0);
    return { database, durationMs: Date.now() - t0, loadMs, checks, problems, restoreEventId };
  } finally {
    await k.destroy();
  }
}

/**
 * The restore event (action 'system.restored'): what was restored and what the checks found,
 * signed with the site's signing key (RSA-SHA256 over the canonical JSON of `after` without the
 * signature). A chain checker that holds a checkpoint beyond `backup.auditHead.lastId` reads the
 * events after that id and up to the checkpoint as lost with this restore, not as removed.
 */
async function recordRestoreEvent(
  k: Knex,
  m: BackupManifest,
  folder: string,
  problems: string[],
  durationMs: number,
): Promise<number> {
  const signing = loadSigningMaterial(signingSettingsFrom(loadConfig()));
  const content = {
    backup: {
      folder: path.basename(folder),
      database: m.database,
      takenAt: m.takenAt,
      manifestSha256: crypto
        .createHash('sha256')
        .update(fs.readFileSync(path.join(folder, MANIFEST)))
        .digest('hex'),
      auditHead: m.auditHead,
      exact: m.exact,
    },
    restoredAt: new Date().toISOString(),
    restoredBy: `${os.userInfo().username}@${os.hostname()} (restore command, owner database account)`,
    checks: problems.length ? problems.slice(0, 20) : 'all passed',
    durationMs,
  };
  const signature = crypto.sign('sha256', Buffer.from(canonicalJson(content)), signing.key).toString('base64');
  return k.transaction((trx) =>
    appendAudit(trx, {
      actor: { id: null, name: 'Drumline restore (owner account)' },
      action: 'system.restored',
      entityType: 'system',
      entityId: 'database',
      after: {
        ...content,
        signature: { algorithm: 'RSA-SHA256', signerFingerprint: signing.fingerprint, value: signature },
      },
      reason: `Restored from the backup taken ${m.takenAt}`,
    }),
  );
}

/** Checks the signature of a restore event's `after` (the site's signing certificate). */
export function verifyRestoreEvent(after: Record<string, unknown>): boolean {
  const { signature, ...content } = after as { signature?: { value: string; signerFingerprint: string } };
  if (!signature) return false;
  const signing = loadSigningMaterial(signingSettingsFrom(loadConfig()));
  if (signature.signerFingerprint !== signing.fingerprint) return false;
  const pub = crypto.createPublicKey(signing.key);
  return crypto.verify('sha256', Buffer.from(canonicalJson(content)), pub, Buffer.from(signature.value, 'base64'));
}

/**
 * Copies the keys (signing key and passphrase, the audit-chain key: the .keys folder, and
 * SIGNING_P12_PATH when set) to a folder of their own with a manifest of SHA-256 sums. Refuses a
 * folder inside a database backup folder: keys and data are never stored together.
 */
export function backupKeys(target: string): { folder: string; files: string[] } {
  const dest = path.resolve(target);
  for (let p = dest; p !== path.dirname(p); p = path.dirname(p))
    if (fs.existsSync(path.join(p, MANIFEST)))
      throw new Error(`${dest} is inside a database backup folder; keys are kept apart from the dump.`);
  const sources: string[] = [];
  const keysDir = path.join(repoRoot, '.keys');
  if (fs.existsSync(keysDir))
    for (const f of fs.readdirSync(keysDir))
      if (fs.statSync(path.join(keysDir, f)).isFile()) sources.push(path.join(keysDir, f));
  const cfg = loadConfig();
  if (cfg.signingP12Path) sources.push(path.resolve(repoRoot, cfg.signingP12Path));
  if (process.env.AUDIT_CHAIN_KEY_FILE) sources.push(path.resolve(repoRoot, process.env.AUDIT_CHAIN_KEY_FILE));
  if (!sources.length) throw new Error('no keys found (.keys/ is empty and SIGNING_P12_PATH is unset)');
  const folder = path.join(dest, `drumline-keys-${stamp(new Date())}`);
  fs.mkdirSync(folder, { recursive: true, mode: 0o700 });
  const sums: Record<string, string> = {};
  for (const src of sources) {
    const name = path.basename(src);
    fs.copyFileSync(src, path.join(folder, name));
    fs.chmodSync(path.join(folder, name), 0o600);
    sums[name] = crypto.createHash('sha256').update(fs.readFileSync(src)).digest('hex');
  }
  fs.writeFileSync(path.join(folder, 'keys-manifest.json'), JSON.stringify({ sha256: sums }, null, 2) + '\n', {
    mode: 0o600,
  });
  return { folder, files: Object.keys(sums) };
}
