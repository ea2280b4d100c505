/**
 * ERP/LIMS link (issue 14 item 6): machine accounts with API tokens, webhook endpoints and the
 * webhook outbox; the lot remembers the ERP's goods-receipt number (receipts are idempotent by it).
 *
 * - machine_account (guarded): the token is stored only as its SHA-256; name, scopes and hash never
 *   change; revocation is set once;
 * - webhook_endpoint (guarded): URL, secret and events never change; deactivation is set once;
 * - webhook_delivery (operational): the outbox, one row per event and endpoint, with attempts and
 *   back-off; the GMP event that caused it is in the audit trail;
 * - lot.erp_receipt_number, lot.erp_account_id: fixed; the number is unique per machine account.
 */
import type { Knex } from 'knex';
import { dropGuard, guardRows, type GuardSpec } from '../protect';
import { lotGuard143 } from './143_disposition';

export function lotGuard144(): GuardSpec {
  const base = lotGuard143();
  return { ...base, fixed: [...base.fixed, 'erp_receipt_number', 'erp_account_id'] };
}

const MACHINE_GUARD: GuardSpec = {
  table: 'machine_account',
  fixed: ['id', 'name', 'scopes', 'token_hash', 'token_hint', 'created_by', 'created_at'],
  setOnce: ['revoked_at', 'revoked_by', 'revoke_reason'],
  mutable: ['last_used_at'],
};

const ENDPOINT_GUARD: GuardSpec = {
  table: 'webhook_endpoint',
  fixed: ['id', 'name', 'url', 'secret', 'events', 'created_by', 'created_at'],
  setOnce: ['deactivated_at', 'deactivated_by'],
};

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('machine_account', (t) => {
    t.increments('id').primary();
    t.string('name', 120).notNullable().unique();
    t.text('scopes').notNullable(); // JSON array
    t.string('token_hash', 64).notNullable().unique(); // hex SHA-256 of the token; the token is shown once
    t.string('token_hint', 16).notNullable(); // the first characters, to recognise it
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('last_used_at', { precision: 3 }).nullable();
    t.datetime('revoked_at', { precision: 3 }).nullable();
    t.integer('revoked_by').unsigned().nullable().references('app_user.id');
    t.text('revoke_reason').nullable();
  });
  await knex.schema.createTable('webhook_endpoint', (t) => {
    t.increments('id').primary();
    t.string('name', 120).notNullable();
    t.string('url', 500).notNullable();
    t.string('secret', 100).notNullable(); // whsec_..., needed to sign; shown once
    t.text('events').notNullable(); // JSON array
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('deactivated_at', { precision: 3 }).nullable();
    t.integer('deactivated_by').unsigned().nullable().references('app_user.id');
  });
  await knex.schema.createTable('webhook_delivery', (t) => {
    t.increments('id').primary();
    t.integer('endpoint_id').unsigned().notNullable().references('webhook_endpoint.id');
    t.string('message_id', 64).notNullable(); // webhook-id header: the same for every retry (receivers de-duplicate)
    t.string('event_type', 40).notNullable();
    t.text('payload', 'longtext').notNullable();
    t.string('status', 16).notNullable().defaultTo('pending'); // pending, delivered, failed
    t.integer('attempts').notNullable().defaultTo(0);
    t.datetime('next_attempt_at', { precision: 3 }).notNullable();
    t.integer('last_status_code').nullable();
    t.text('last_error').nullable();
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('delivered_at', { precision: 3 }).nullable();
    t.unique(['endpoint_id', 'message_id']);
    t.index(['status', 'next_attempt_at']);
  });
  // A lot the ERP creates has no person as its creator: the machine account is named instead.
  await knex.raw('ALTER TABLE lot MODIFY created_by INT UNSIGNED NULL');
  await knex.schema.alterTable('lot', (t) => {
    t.string('erp_receipt_number', 80).nullable();
    t.integer('erp_account_id').unsigned().nullable().references('machine_account.id');
    t.unique(['erp_account_id', 'erp_receipt_number']);
  });
  await knex.raw(
    'ALTER TABLE lot ADD CONSTRAINT lot_creator CHECK (created_by IS NOT NULL OR (erp_account_id IS NOT NULL AND erp_receipt_number IS NOT NULL))',
  );
  await guardRows(knex, MACHINE_GUARD);
  await guardRows(knex, ENDPOINT_GUARD);
  await guardRows(knex, lotGuard144());
}

export async function down(knex: Knex): Promise<void> {
  await guardRows(knex, lotGuard143());
  await knex.raw('ALTER TABLE lot DROP CONSTRAINT lot_creator');
  await knex.schema.alterTable('lot', (t) => {
    t.dropUnique(['erp_account_id', 'erp_receipt_number']);
    t.dropForeign(['erp_account_id']);
    t.dropColumns('erp_receipt_number', 'erp_account_id');
  });
  await dropGuard(knex, 'machine_account');
  await dropGuard(knex, 'webhook_endpoint');
  for (const t of ['webhook_delivery', 'webhook_endpoint', 'machine_account']) await knex.schema.dropTableIfExists(t);
}
