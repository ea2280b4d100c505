/**
 * Database connection settings from the environment.
 * A site points Drumline at its own MariaDB with DATABASE_URL (runtime account) and
 * DATABASE_OWNER_URL (migration account), e.g. mysql://user:pw@host:3306/drumline.
 * Without them, the DRUMLINE_DB_* variables written by db/mariadb.sh are used
 * (loaded from .data/db.env when present).
 */
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import type { Knex } from 'knex';

export const repoRoot = path.resolve(path.dirname(fileURLToPath(import.meta.url)), '..');

function loadDotEnv(): void {
  const file = path.join(repoRoot, '.data', 'db.env');
  if (!fs.existsSync(file)) return;
  for (const line of fs.readFileSync(file, 'utf8').split('\n')) {
    const m = /^([A-Z0-9_]+)=(.*)$/.exec(line.trim());
    if (m && process.env[m[1]] === undefined) process.env[m[1]] = m[2];
  }
}
loadDotEnv();

export interface DbSettings {
  host: string;
  port: number;
  database: string;
  user: string;
  password: string;
}

function fromUrl(url: string): DbSettings {
  const u = new URL(url);
  return {
    host: u.hostname,
    port: Number(u.port || 3306),
    database: decodeURIComponent(u.pathname.replace(/^\//, '')),
    user: decodeURIComponent(u.username),
    password: decodeURIComponent(u.password),
  };
}

/** Settings of the runtime account (the server's), or of the owner account (migrations). */
export function dbSettings(kind: 'runtime' | 'owner', databaseOverride?: string): DbSettings {
  const env = process.env;
  const url = kind === 'owner' ? env.DATABASE_OWNER_URL : env.DATABASE_URL;
  const s: DbSettings = url
    ? fromUrl(url)
    : {
        host: env.DRUMLINE_DB_HOST ?? '127.0.0.1',
        port: Number(env.DRUMLINE_DB_PORT ?? 3307),
        database: env.DRUMLINE_DB_NAME ?? 'drumline',
        user: (kind === 'owner' ? env.DRUMLINE_DB_OWNER_USER : env.DRUMLINE_DB_USER) ?? '',
        password: (kind === 'owner' ? env.DRUMLINE_DB_OWNER_PASSWORD : env.DRUMLINE_DB_PASSWORD) ?? '',
      };
  if (databaseOverride) s.database = databaseOverride;
  if (!s.user) {
    throw new Error(
      `No database account configured for the ${kind} connection. Run "bash db/mariadb.sh start" or set ${
        kind === 'owner' ? 'DATABASE_OWNER_URL' : 'DATABASE_URL'
      }.`,
    );
  }
  return s;
}

function oneLine(m: unknown): string {
  const e = m as { message?: string };
  return String(typeof m === 'string' ? m : (e?.message ?? m)).split('\n')[0];
}

export function knexConfig(s: DbSettings, pool = { min: 0, max: 10 }): Knex.Config {
  return {
    client: 'mysql2',
    connection: {
      host: s.host,
      port: s.port,
      user: s.user,
      password: s.password,
      database: s.database,
      charset: 'utf8mb4',
      timezone: 'Z',
      dateStrings: false,
      supportBigNumbers: true,
      bigNumberStrings: false,
      connectTimeout: 5000,
    },
    pool: { ...pool, acquireTimeoutMillis: 5000 } as Knex.PoolConfig,
    acquireConnectionTimeout: 5000,
    // One line per pool warning (e.g. "connect ECONNREFUSED" while the database is down), no stack trace.
    log: {
      warn: (m: unknown) => console.warn('[db]', oneLine(m)),
      error: (m: unknown) => console.error('[db]', oneLine(m)),
      deprecate: (m: unknown) => console.warn('[db] deprecated:', oneLine(m)),
      debug: () => undefined,
    },
  };
}
