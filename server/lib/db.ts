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

/**
 * A text column that holds one of a contract's values (a status, a verdict, a check type): the
 * generated row types (server/lib/db-tables.ts) type it as string, as the schema keeps it a VARCHAR;
 * this narrows a stored value to the contract's union by checking it, so a value the code does not
 * know fails loudly instead of passing through a cast.
 */
export function oneOf<T extends string>(values: readonly T[], v: string, what: string): T {
  if (!isOneOf(values, v)) throw new Error(`${what} "${v}" is not one of ${values.join(', ')}`);
  return v;
}

/** Whether a stored text is one of `values` (for a caller that handles an unknown value itself). */
export function isOneOf<T extends string>(values: readonly T[], v: string): v is T {
  return values.some((x) => x === v);
}

/** `oneOf` for a nullable column. */
export function oneOfOrNull<T extends string>(values: readonly T[], v: string | null, what: string): T | null {
  return v === null ? null : oneOf(values, v, what);
}
