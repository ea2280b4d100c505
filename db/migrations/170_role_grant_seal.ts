/**
 * Sealed role grants (server/lib/grant-seal.ts; docs/access.md). Adds to role_grant the grant it
 * follows (previous_grant_id) and its seal, an HMAC under a key held outside the database; seals
 * every existing grant in order (the append-only triggers are lifted for this one statement set
 * and put back at once); and refuses, for every account, a grant that does not follow the
 * account's latest grant or that has no seal of the right shape. Only Drumline, holding the key,
 * writes a seal that verifies; the server honours roles only from a verified, linked grant.
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly } from '../protect';
import { grantSeal } from '../../server/lib/grant-seal';

const refuse = (message: string) => `SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = '${message.replace(/'/g, "''")}'`;

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('role_grant', (t) => {
    t.integer('previous_grant_id').unsigned().nullable().unique().references('role_grant.id');
    t.string('seal', 64).nullable();
  });
  await dropAppendOnly(knex, 'role_grant');
  const last = new Map<number, number>();
  for (const g of await knex('role_grant').orderBy('id')) {
    const previous = last.get(g.user_id) ?? null;
    const seal = grantSeal({ ...g, previous_grant_id: previous });
    await knex.raw('UPDATE role_grant SET previous_grant_id = ?, seal = ? WHERE id = ?', [previous, seal, g.id]);
    last.set(g.user_id, g.id);
  }
  await appendOnly(knex, 'role_grant');
  await knex.raw('ALTER TABLE role_grant MODIFY seal CHAR(64) NOT NULL');
  await knex.raw(`CREATE TRIGGER role_grant_link BEFORE INSERT ON role_grant FOR EACH ROW FOLLOWS role_grant_check
BEGIN
  IF NOT (NEW.previous_grant_id <=> (SELECT MAX(g.id) FROM role_grant g WHERE g.user_id = NEW.user_id)) THEN
    ${refuse("a role grant follows the account's latest grant")};
  END IF;
  IF NEW.seal NOT REGEXP '^[0-9a-f]{64}$' THEN ${refuse('a role grant carries its seal')}; END IF;
END`);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP TRIGGER IF EXISTS role_grant_link');
  await knex.schema.alterTable('role_grant', (t) => {
    t.dropForeign(['previous_grant_id']);
    t.dropUnique(['previous_grant_id']);
    t.dropColumn('previous_grant_id');
    t.dropColumn('seal');
  });
}
