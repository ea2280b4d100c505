/**
 * Material master for disposition (issue 14 item 2): per material, versioned and signed by QA,
 * the retest interval and shelf life, a risk class and the checks besides IR identity that a lot
 * needs before release (a checklist QA defines: certificate-of-analysis review against the
 * specification, appearance, tests done elsewhere with their reference, and for a material whose
 * identity IR cannot show, the replacing identity test). Append-only: a change is a new version.
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly } from '../protect';

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('material_profile', (t) => {
    t.increments('id').primary();
    t.integer('material_id').unsigned().notNullable().references('material.id');
    t.integer('version').notNullable();
    t.integer('retest_months').notNullable();
    t.integer('shelf_life_months').notNullable();
    t.string('risk_class', 16).notNullable(); // low, medium, high
    t.text('checks').notNullable(); // JSON [{ key, kind, label }]
    t.text('reason').notNullable();
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.integer('created_by').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.unique(['material_id', 'version']);
  });
  await knex.raw(
    "ALTER TABLE material_profile ADD CONSTRAINT material_profile_values CHECK (risk_class IN ('low', 'medium', 'high') " +
      'AND retest_months BETWEEN 1 AND 120 AND shelf_life_months BETWEEN 1 AND 240 AND retest_months <= shelf_life_months)',
  );
  await appendOnly(knex, 'material_profile');
}

export async function down(knex: Knex): Promise<void> {
  await dropAppendOnly(knex, 'material_profile');
  await knex.schema.dropTableIfExists('material_profile');
}
