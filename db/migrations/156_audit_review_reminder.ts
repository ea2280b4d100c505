/**
 * The periodic audit-trail review's reminder (docs/trending.md): a job under the
 * `audit-review-reminder` lease mails QA once when a review falls due. One row per due period
 * (the day the review fell due, or none on record) records that its reminder went out, so that no
 * app server and no later run mails it again.
 * - audit_review_reminder: append-only.
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly } from '../protect';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('audit_review_reminder', (t) => {
    t.increments('id').primary();
    /** the day the review fell due (YYYY-MM-DD), or 'none-on-record' before the first review */
    t.string('due_key', 20).notNullable().unique();
    /** the last review whose period the interval counts from; null before the first review */
    t.integer('after_review_id').unsigned().nullable().references('audit_review.id');
    t.integer('interval_months').unsigned().notNullable();
    t.integer('recipients').unsigned().notNullable();
    t.datetime('mailed_at', { precision: 3 }).notNullable();
  });
  await appendOnly(knex, 'audit_review_reminder');
}

export async function down(knex: Knex): Promise<void> {
  await dropAppendOnly(knex, 'audit_review_reminder');
  await knex.schema.dropTableIfExists('audit_review_reminder');
}
