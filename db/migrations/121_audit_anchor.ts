/**
 * The audit chain anchored outside the database (issue 12 item 4; docs/compliance.md):
 * - audit_head gets the id of the first keyed event and the id of the key (never the key): from
 *   that event on, every event's hash is an HMAC-SHA-256 with a key held outside MariaDB;
 *   earlier events keep their plain SHA-256 hashes.
 * - audit_chain_key: the stated event where the keyed chain starts, with the key id; append-only.
 * - audit_checkpoint: each signed, time-stamped checkpoint (event count, head hash, time) also
 *   written as a file to the checkpoint folder and mailed to QA; append-only.
 * - audit_chain_run: progress of a full chain check run by the background job (operational: its
 *   counters advance while it runs; its request and result are audit events).
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly } from '../protect';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('audit_head', (t) => {
    t.bigInteger('keyed_from').unsigned().nullable();
    t.string('key_id', 32).nullable();
  });
  await knex.schema.createTable('audit_chain_key', (t) => {
    t.increments('id').primary();
    t.string('key_id', 32).notNullable();
    t.bigInteger('first_event_id').unsigned().notNullable().unique();
    t.datetime('recorded_at', { precision: 3 }).notNullable();
  });
  await knex.schema.createTable('audit_checkpoint', (t) => {
    t.increments('id').primary();
    t.bigInteger('event_count').unsigned().notNullable();
    t.string('head_hash', 64).notNullable();
    t.string('key_id', 32).nullable();
    t.bigInteger('keyed_from').unsigned().nullable();
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('time_stamped_at', { precision: 3 }).nullable();
    t.string('file_name', 200).notNullable();
    t.string('file_sha256', 64).notNullable();
    t.text('document', 'mediumtext').notNullable();
    t.index(['event_count']);
  });
  await knex.schema.createTable('audit_chain_run', (t) => {
    t.increments('id').primary();
    t.integer('requested_by').unsigned().nullable().references('app_user.id');
    t.datetime('requested_at', { precision: 3 }).notNullable();
    t.string('status', 16).notNullable(); // queued, running, finished, failed
    t.datetime('started_at', { precision: 3 }).nullable();
    t.datetime('finished_at', { precision: 3 }).nullable();
    t.bigInteger('total').unsigned().notNullable().defaultTo(0);
    t.bigInteger('checked').unsigned().notNullable().defaultTo(0);
    t.text('result').nullable(); // JSON chain report
    t.text('error').nullable();
    t.index(['status', 'id']);
  });
  await appendOnly(knex, 'audit_chain_key');
  await appendOnly(knex, 'audit_checkpoint');
}

export async function down(knex: Knex): Promise<void> {
  await dropAppendOnly(knex, 'audit_checkpoint');
  await dropAppendOnly(knex, 'audit_chain_key');
  await knex.schema.dropTable('audit_chain_run');
  await knex.schema.dropTable('audit_checkpoint');
  await knex.schema.dropTable('audit_chain_key');
  await knex.schema.alterTable('audit_head', (t) => {
    t.dropColumn('keyed_from');
    t.dropColumn('key_id');
  });
}
