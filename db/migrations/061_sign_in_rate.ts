/**
 * The per-address sign-in limit, kept in MariaDB so that it holds across every app server behind
 * the proxy (server/lib/rate-store.ts): one row per client address and window. Operational state,
 * not a GMP record: the runtime account may update and delete it.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('sign_in_rate', (t) => {
    t.string('client_key', 100).primary(); // the client address as Express derives it (trust proxy)
    t.integer('hits').unsigned().notNullable();
    t.datetime('window_ends_at', { precision: 3 }).notNullable();
    t.index(['window_ends_at']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('sign_in_rate');
}
