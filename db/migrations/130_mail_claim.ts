/**
 * Mail rows claimed by an app server (issue 13 item 2): when a server sets a row to 'sending' it
 * records itself and the time, so a row left 'sending' by a server that died mid-delivery is
 * taken up again by any server after MAIL_SENDING_TIMEOUT_S (server/lib/mail.ts). mail_outbox is
 * operational state (db/migrations/index.ts), not a GMP record.
 */
import type { Knex } from 'knex';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.alterTable('mail_outbox', (t) => {
    t.datetime('claimed_at', { precision: 3 }).nullable();
    t.string('claimed_by', 120).nullable(); // process identity as in job_lease.holder
    t.index(['status', 'claimed_at']);
  });
}

export async function down(knex: Knex): Promise<void> {
  await knex.schema.alterTable('mail_outbox', (t) => {
    t.dropIndex(['status', 'claimed_at']);
    t.dropColumn('claimed_at');
    t.dropColumn('claimed_by');
  });
}
