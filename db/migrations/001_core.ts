/** Users, sessions, the append-only hash-chained audit trail, e-signatures and stored files. */
import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('app_user', (t) => {
    t.increments('id').primary();
    t.string('username', 64).notNullable().unique();
    t.string('full_name', 120).notNullable();
    t.string('email', 200).notNullable();
    t.string('password_hash', 255).notNullable();
    t.text('roles').notNullable(); // JSON array of role names
    t.boolean('must_change_password').notNullable().defaultTo(true);
    t.integer('failed_attempts').notNullable().defaultTo(0);
    t.datetime('locked_until', { precision: 3 }).nullable();
    t.boolean('active').notNullable().defaultTo(true);
    t.datetime('password_changed_at', { precision: 3 }).nullable();
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('updated_at', { precision: 3 }).notNullable();
  });

  await knex.schema.createTable('user_session', (t) => {
    t.string('id', 64).primary(); // hex(sha256(token)); the token itself is never stored
    t.integer('user_id').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('last_seen_at', { precision: 3 }).notNullable();
    t.datetime('expires_at', { precision: 3 }).notNullable();
    t.boolean('signed_once').notNullable().defaultTo(false);
    t.string('ip', 64).nullable();
    t.index(['user_id']);
  });

  // Serialises audit appends: the single row holds the id and hash of the last event.
  await knex.schema.createTable('audit_head', (t) => {
    t.integer('id').primary();
    t.bigInteger('last_id').notNullable();
    t.string('last_hash', 64).notNullable();
  });
  await knex('audit_head').insert({ id: 1, last_id: 0, last_hash: '0'.repeat(64) });

  await knex.schema.createTable('audit_event', (t) => {
    t.bigInteger('id').unsigned().primary(); // assigned from audit_head, gap-free
    t.datetime('occurred_at', { precision: 3 }).notNullable();
    t.integer('actor_id').nullable();
    t.string('actor_name', 160).notNullable();
    t.string('action', 64).notNullable();
    t.string('entity_type', 40).notNullable();
    t.string('entity_id', 64).nullable();
    t.text('before_json', 'longtext').nullable();
    t.text('after_json', 'longtext').nullable();
    t.text('reason').nullable();
    t.string('ip', 64).nullable();
    t.string('prev_hash', 64).notNullable();
    t.string('hash', 64).notNullable();
    t.index(['occurred_at']);
    t.index(['actor_id', 'occurred_at']);
    t.index(['action', 'occurred_at']);
    t.index(['entity_type', 'entity_id', 'occurred_at']);
  });
  await knex.raw(
    "CREATE TRIGGER audit_event_no_update BEFORE UPDATE ON audit_event FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit_event is append-only'",
  );
  await knex.raw(
    "CREATE TRIGGER audit_event_no_delete BEFORE DELETE ON audit_event FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'audit_event is append-only'",
  );

  await knex.schema.createTable('e_signature', (t) => {
    t.increments('id').primary();
    t.integer('user_id').unsigned().notNullable().references('app_user.id');
    t.string('printed_name', 120).notNullable();
    t.string('meaning', 40).notNullable(); // performed, verified, approved, retired, ...
    t.string('entity_type', 40).notNullable();
    t.string('entity_id', 64).notNullable();
    t.string('content_hash', 64).notNullable(); // SHA-256 of the canonical signed content
    t.text('statement').nullable(); // comment or justification signed with it
    t.datetime('signed_at', { precision: 3 }).notNullable();
    t.index(['entity_type', 'entity_id']);
  });
  await knex.raw(
    "CREATE TRIGGER e_signature_no_update BEFORE UPDATE ON e_signature FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'e_signature is append-only'",
  );
  await knex.raw(
    "CREATE TRIGGER e_signature_no_delete BEFORE DELETE ON e_signature FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'e_signature is append-only'",
  );

  await knex.schema.createTable('stored_file', (t) => {
    t.increments('id').primary();
    t.string('sha256', 64).notNullable();
    t.string('file_name', 255).notNullable();
    t.string('media_type', 100).notNullable();
    t.integer('size').unsigned().notNullable();
    t.binary('data').notNullable();
    t.integer('uploaded_by').unsigned().nullable().references('app_user.id');
    t.datetime('uploaded_at', { precision: 3 }).notNullable();
    t.index(['sha256']);
  });
  await knex.raw('ALTER TABLE stored_file MODIFY data LONGBLOB NOT NULL');

  await knex.schema.createTable('mail_outbox', (t) => {
    t.increments('id').primary();
    t.string('to_address', 400).notNullable();
    t.string('subject', 300).notNullable();
    t.text('body').notNullable();
    t.string('status', 16).notNullable().defaultTo('queued'); // queued, sent, failed
    t.integer('attempts').notNullable().defaultTo(0);
    t.text('last_error').nullable();
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.datetime('next_attempt_at', { precision: 3 }).notNullable();
    t.datetime('sent_at', { precision: 3 }).nullable();
    t.index(['status', 'next_attempt_at']);
  });
}

export async function down(knex: Knex): Promise<void> {
  for (const t of [
    'mail_outbox',
    'stored_file',
    'e_signature',
    'audit_event',
    'audit_head',
    'user_session',
    'app_user',
  ]) {
    await knex.schema.dropTableIfExists(t);
  }
}
