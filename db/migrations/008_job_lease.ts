/**
 * Leases for background jobs (docs/architecture.md, "Background jobs"): one row per job; the app
 * process whose lease is current runs the job, every other process waits. A lease is taken and
 * renewed by an ordinary row update (no table locks, no GET_LOCK), so it holds on a Galera cluster
 * too. The row is operational state, not a GMP record: the runtime account may update it.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('job_lease', (t) => {
    t.string('name', 64).primary();
    t.string('holder', 120).notNullable(); // process identity: host, pid and a random part
    t.datetime('expires_at', { precision: 3 }).notNullable();
    t.datetime('acquired_at', { precision: 3 }).notNullable();
    t.datetime('last_run_at', { precision: 3 }).nullable();
    t.datetime('last_ok_at', { precision: 3 }).nullable();
    t.text('last_error').nullable();
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.dropTableIfExists('job_lease');
}
