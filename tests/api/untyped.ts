import type { Knex } from 'knex';

/**
 * An untyped query on `table`, for a test that tries what the table types forbid (an update of an
 * append-only table, a value outside its column's type): the database itself must refuse it, so the
 * compiler lets the attempt through here (server/lib/db-tables.ts).
 */
// eslint-disable-next-line @typescript-eslint/no-explicit-any -- an attempt outside the schema's types, on purpose
export function untyped(k: Knex, table: string): Knex.QueryBuilder<any, any> {
  // eslint-disable-next-line @typescript-eslint/no-explicit-any -- as above
  return k<any, any>(table);
}
