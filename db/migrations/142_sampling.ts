/**
 * Sampling record and container status (issue 14 items 3 and 4).
 *
 * - line_clearance: the sampling booth or area cleared before a lot, signed by the person who
 *   cleared it;
 * - sampling_record: one per lot: sampler, area, time, tool, reserve samples, signed;
 * - sampled_container: per container opened, sampled and resealed (all three, CHECK);
 * - container_status: each container's status history (quarantine, sampled, released, rejected,
 *   blocked), one row per change, the label printed from it.
 * All append-only. A trigger on measurement refuses a measurement of a container that was not
 * sampled, for every lot received under a sampling plan (sampling precedes testing; lots stored
 * before migration 140 have no plan).
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly } from '../protect';

export const SAMPLING_TABLES = ['line_clearance', 'sampling_record', 'sampled_container', 'container_status'];

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('line_clearance', (t) => {
    t.increments('id').primary();
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.string('area', 120).notNullable();
    t.text('previous_use').nullable(); // what the booth held before (material, lot), as found
    t.text('note').nullable();
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.integer('cleared_by').unsigned().notNullable().references('app_user.id');
    t.datetime('cleared_at', { precision: 3 }).notNullable();
    t.index(['lot_id']);
  });

  await knex.schema.createTable('sampling_record', (t) => {
    t.increments('id').primary();
    t.integer('lot_id').unsigned().notNullable().unique().references('lot.id');
    t.integer('line_clearance_id').unsigned().notNullable().references('line_clearance.id');
    t.string('area', 120).notNullable();
    t.datetime('sampled_at', { precision: 3 }).notNullable();
    t.string('tool', 200).notNullable();
    t.decimal('reserve_quantity', 12, 3).notNullable();
    t.string('reserve_unit', 16).notNullable();
    t.string('reserve_location', 200).notNullable();
    t.text('note').nullable();
    t.string('sampling_plan', 24).notNullable(); // the lot's plan, as applied
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.integer('sampler_id').unsigned().notNullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
  });
  await knex.raw(
    'ALTER TABLE sampling_record ADD CONSTRAINT sampling_reserve CHECK (reserve_quantity > 0 AND ' +
      "reserve_unit IN ('g', 'kg', 'mL', 'L', 'units'))",
  );

  await knex.schema.createTable('sampled_container', (t) => {
    t.increments('id').primary();
    t.integer('sampling_record_id').unsigned().notNullable().references('sampling_record.id');
    t.integer('container_id').unsigned().notNullable().unique().references('container.id');
    t.boolean('opened').notNullable();
    t.boolean('sampled').notNullable();
    t.boolean('resealed').notNullable();
    t.string('note', 400).nullable();
  });
  await knex.raw(
    'ALTER TABLE sampled_container ADD CONSTRAINT sampled_container_steps CHECK (opened = 1 AND sampled = 1 AND resealed = 1)',
  );
  await knex.raw(
    `CREATE TRIGGER sampled_container_same_lot BEFORE INSERT ON sampled_container FOR EACH ROW
     BEGIN
       IF NOT EXISTS (SELECT 1 FROM sampling_record r JOIN container c ON c.lot_id = r.lot_id
                      WHERE r.id = NEW.sampling_record_id AND c.id = NEW.container_id) THEN
         SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'sampled_container: the container is not of the sampled lot';
       END IF;
     END`,
  );

  await knex.schema.createTable('container_status', (t) => {
    t.increments('id').primary();
    t.integer('container_id').unsigned().notNullable().references('container.id');
    t.string('status', 16).notNullable();
    t.text('reason').nullable();
    t.integer('signature_id').unsigned().nullable().references('e_signature.id');
    t.integer('changed_by').unsigned().nullable().references('app_user.id');
    t.datetime('changed_at', { precision: 3 }).notNullable();
    t.index(['container_id', 'id']);
  });
  await knex.raw(
    "ALTER TABLE container_status ADD CONSTRAINT container_status_value CHECK (status IN ('quarantine', 'sampled', 'released', 'rejected', 'blocked'))",
  );

  await knex.raw(
    `CREATE TRIGGER measurement_sampled_only BEFORE INSERT ON measurement FOR EACH ROW
     BEGIN
       IF EXISTS (SELECT 1 FROM container c JOIN lot l ON l.id = c.lot_id
                  WHERE c.id = NEW.container_id AND l.sampling_plan IS NOT NULL)
          AND NOT EXISTS (SELECT 1 FROM sampled_container s WHERE s.container_id = NEW.container_id) THEN
         SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'measurement: the container was not sampled';
       END IF;
     END`,
  );
  for (const t of SAMPLING_TABLES) await appendOnly(knex, t);
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP TRIGGER IF EXISTS measurement_sampled_only');
  await knex.raw('DROP TRIGGER IF EXISTS sampled_container_same_lot');
  for (const t of [...SAMPLING_TABLES].reverse()) {
    await dropAppendOnly(knex, t);
    await knex.schema.dropTableIfExists(t);
  }
}
