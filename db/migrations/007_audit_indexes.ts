/**
 * Indexes for the audit trail browser (issue 7). The list is ordered by (occurred_at, id); every
 * typical filter is an equality on the leading column of one index whose next column is
 * occurred_at, so MariaDB reads a page in index order without sorting. 001_core already has
 * (occurred_at), (actor_id, occurred_at), (action, occurred_at) and (entity_type, entity_id,
 * occurred_at); this adds (entity_type, occurred_at) for "all events on one kind of record"
 * (also the administrator's account-events view). Text in the reason is searched window by
 * window along the time index (server/modules/audit/repo.ts), so no FULLTEXT index is kept up
 * to date on every GMP write. Indexes change no row: the append-only triggers and the hash chain
 * are untouched.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.raw('CREATE INDEX audit_event_entity_type_occurred_at_index ON audit_event (entity_type, occurred_at)');
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP INDEX audit_event_entity_type_occurred_at_index ON audit_event');
}
