/** The runtime database connection (the restricted account) shared by all modules. */
import knexFactory, { type Knex } from 'knex';
import { dbSettings, knexConfig } from '../../db/config';

let current: Knex | null = null;

export function initDb(database?: string): Knex {
  if (current) return current;
  current = knexFactory(knexConfig(dbSettings('runtime', database)));
  return current;
}

export function getDb(): Knex {
  if (!current) throw new Error('database not initialised: call initDb() first');
  return current;
}

export async function closeDb(): Promise<void> {
  if (current) await current.destroy();
  current = null;
}

/** The current UTC time with millisecond precision, as stored in DATETIME(3) columns. */
export function nowUtc(): Date {
  return new Date();
}

/** Parses a JSON text column (MariaDB returns JSON as text). */
export function parseJson<T>(v: unknown, fallback: T): T {
  if (v === null || v === undefined) return fallback;
  if (typeof v !== 'string') return v as T;
  try {
    return JSON.parse(v) as T;
  } catch {
    return fallback;
  }
}

export type Db = Knex | Knex.Transaction;

/** A row that exists by construction (inserted in this transaction, a single-row table): its absence is a bug. */
export function must<T>(row: T | undefined, what: string): T {
  if (row === undefined) throw new Error(`${what} is missing`);
  return row;
}
