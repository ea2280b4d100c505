/**
 * Password history (docs/compliance.md, "Authentication"): the Argon2id hash of every password set
 * through the application, so that a new password can be refused when it is one of the account's
 * last five. Append-only for the runtime account (db/migrations/index.ts, appendOnlyTables) and
 * in the database itself (triggers), like the other records that must not be rewritten.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('password_history', (t) => {
    t.bigIncrements('id').primary();
    t.integer('user_id').unsigned().notNullable().references('app_user.id');
    t.string('password_hash', 255).notNullable();
    t.datetime('set_at', { precision: 3 }).notNullable();
    t.index(['user_id', 'id']);
  });
  await knex.raw(
    "CREATE TRIGGER password_history_no_update BEFORE UPDATE ON password_history FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'password_history is append-only'",
  );
  await knex.raw(
    "CREATE TRIGGER password_history_no_delete BEFORE DELETE ON password_history FOR EACH ROW SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'password_history is append-only'",
  );
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP TRIGGER IF EXISTS password_history_no_delete');
  await knex.raw('DROP TRIGGER IF EXISTS password_history_no_update');
  await knex.schema.dropTableIfExists('password_history');
}
