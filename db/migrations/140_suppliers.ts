/**
 * Supplier master (issue 14 item 1): suppliers and manufacturers, the approved sources of a
 * material (a supplier, optionally trading a named manufacturer's product) and their signed
 * qualification history. The free-text supplier of every stored lot is linked to a master record
 * made from that text; the stored text itself stays as it was (GMP records are never overwritten).
 *
 * Protection (docs/compliance.md, "What protects what"):
 * - supplier, material_source and source_status are append-only: a status change is a new signed
 *   row, the current status is the newest row of a source;
 * - CHECK constraints hold the sampling rules in the database itself: a reduced sampling plan only
 *   for a qualified source with a recorded validation justification (EU GMP Annex 8 para 2-3), a
 *   conditional status only with its conditions;
 * - a lot is never received from a blocked source, and a lot from a new source is a first
 *   delivery sampled and tested container by container (CHECK on lot).
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly, guardRows, type GuardSpec } from '../protect';
import { GUARDS } from './050_record_guards';

export const SOURCE_TABLES = ['supplier', 'material_source', 'source_status'];

/** The lot's guard of migration 050 with the columns of the supplier link classified. */
export function lotGuard140(): GuardSpec {
  const base = GUARDS.find((g) => g.table === 'lot')!;
  return {
    ...base,
    fixed: [
      ...base.fixed,
      'manufacturer_id',
      'source_id',
      'source_status',
      'source_conditions',
      'first_delivery',
      'sampling_plan',
      'sample_count',
    ],
    // set once by this migration's link for lots stored before it; at receipt for every later lot
    setOnce: [...(base.setOnce ?? []), 'supplier_id'],
  };
}

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('supplier', (t) => {
    t.increments('id').primary();
    t.string('code', 40).notNullable().unique();
    t.string('name', 160).notNullable();
    t.string('kind', 16).notNullable(); // supplier, manufacturer, both
    t.string('address', 400).notNullable().defaultTo('');
    t.text('note').nullable();
    t.integer('created_by').unsigned().nullable().references('app_user.id'); // null: made by this migration
    t.datetime('created_at', { precision: 3 }).notNullable();
  });
  await knex.raw(
    "ALTER TABLE supplier ADD CONSTRAINT supplier_kind CHECK (kind IN ('supplier', 'manufacturer', 'both'))",
  );

  await knex.schema.createTable('material_source', (t) => {
    t.increments('id').primary();
    t.integer('material_id').unsigned().notNullable().references('material.id');
    t.integer('supplier_id').unsigned().notNullable().references('supplier.id');
    t.integer('manufacturer_id').unsigned().nullable().references('supplier.id');
    // a generated key makes (material, supplier, no manufacturer) unique too (NULLs never collide in a UNIQUE index)
    t.integer('manufacturer_key').notNullable();
    t.integer('created_by').unsigned().nullable().references('app_user.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
    t.unique(['material_id', 'supplier_id', 'manufacturer_key']);
  });
  await knex.raw(
    'ALTER TABLE material_source ADD CONSTRAINT source_key CHECK (manufacturer_key = IFNULL(manufacturer_id, 0))',
  );

  await knex.schema.createTable('source_status', (t) => {
    t.increments('id').primary();
    t.integer('source_id').unsigned().notNullable().references('material_source.id');
    t.string('status', 16).notNullable(); // new, qualified, conditional, blocked
    t.text('conditions').nullable();
    t.string('sampling_plan', 24).notNullable(); // every-container, sqrt-n-plus-1
    t.text('sampling_justification').nullable();
    t.date('effective_from').notNullable();
    t.date('review_by').nullable();
    t.text('reason').notNullable();
    t.integer('signature_id').unsigned().nullable().references('e_signature.id'); // null only for this migration's links
    t.integer('set_by').unsigned().nullable().references('app_user.id');
    t.datetime('set_at', { precision: 3 }).notNullable();
    t.index(['source_id', 'id']);
  });
  await knex.raw(
    "ALTER TABLE source_status ADD CONSTRAINT source_status_value CHECK (status IN ('new', 'qualified', 'conditional', 'blocked'))",
  );
  await knex.raw(
    "ALTER TABLE source_status ADD CONSTRAINT source_status_plan CHECK (sampling_plan = 'every-container' OR " +
      "(sampling_plan = 'sqrt-n-plus-1' AND status = 'qualified' AND CHAR_LENGTH(TRIM(IFNULL(sampling_justification, ''))) >= 20))",
  );
  await knex.raw(
    "ALTER TABLE source_status ADD CONSTRAINT source_status_conditions CHECK (status <> 'conditional' OR " +
      "CHAR_LENGTH(TRIM(IFNULL(conditions, ''))) > 0)",
  );
  await knex.raw(
    "ALTER TABLE source_status ADD CONSTRAINT source_status_signed CHECK (signature_id IS NOT NULL OR reason LIKE 'Linked by migration 140%')",
  );

  await knex.schema.alterTable('lot', (t) => {
    t.integer('supplier_id').unsigned().nullable().references('supplier.id');
    t.integer('manufacturer_id').unsigned().nullable().references('supplier.id');
    t.integer('source_id').unsigned().nullable().references('material_source.id');
    t.string('source_status', 16).nullable(); // the source's status at receipt
    t.text('source_conditions').nullable(); // QA's conditions of a conditional source, copied at receipt
    t.boolean('first_delivery').notNullable().defaultTo(false);
    t.string('sampling_plan', 24).nullable(); // every-container, sqrt-n-plus-1
    t.integer('sample_count').nullable(); // containers the plan samples
  });
  await knex.raw(
    "ALTER TABLE lot ADD CONSTRAINT lot_source_not_blocked CHECK (source_status IS NULL OR source_status <> 'blocked')",
  );
  await knex.raw(
    "ALTER TABLE lot ADD CONSTRAINT lot_new_source_full CHECK (source_status IS NULL OR source_status <> 'new' OR " +
      "(first_delivery = 1 AND sampling_plan = 'every-container'))",
  );

  // Link the free-text suppliers of stored lots to master records made from that text.
  const now = new Date();
  const texts = (await knex('lot').distinct('supplier').orderBy('supplier')).map((r) => String(r.supplier));
  let n = 0;
  const idOf = new Map<string, number>();
  for (const text of texts) {
    const key = text.trim().toLowerCase();
    if (idOf.has(key)) continue;
    n++;
    const [id] = await knex('supplier').insert({
      code: `SUP-${String(n).padStart(4, '0')}`,
      name: text.trim(),
      kind: 'supplier',
      note: 'Made by migration 140 from the supplier text of stored lots.',
      created_by: null,
      created_at: now,
    });
    idOf.set(key, id);
  }
  if (idOf.size) {
    // The lot guard of migration 050 compares every column it does not know in frozen states: drop
    // it for the link and re-apply it below with the new columns classified.
    await knex.raw('DROP TRIGGER IF EXISTS lot_guard_update');
    for (const text of texts)
      await knex('lot')
        .where({ supplier: text })
        .whereNull('supplier_id')
        .update({ supplier_id: idOf.get(text.trim().toLowerCase())! });
    const pairs = await knex('lot').distinct('material_id', 'supplier_id');
    for (const p of pairs) {
      // every lot was linked just above (supplier_id is NOT NULL in material_source)
      if (p.supplier_id === null) throw new Error(`a lot of material ${p.material_id} has no supplier after linking`);
      const [sourceId] = await knex('material_source').insert({
        material_id: p.material_id,
        supplier_id: p.supplier_id,
        manufacturer_id: null,
        manufacturer_key: 0,
        created_by: null,
        created_at: now,
      });
      await knex('source_status').insert({
        source_id: sourceId,
        status: 'new',
        sampling_plan: 'every-container',
        effective_from: now.toISOString().slice(0, 10),
        reason: 'Linked by migration 140 from stored lots; QA qualifies the source.',
        signature_id: null,
        set_by: null,
        set_at: now,
      });
    }
  }
  for (const t of SOURCE_TABLES) await appendOnly(knex, t);
  await guardRows(knex, lotGuard140());
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP TRIGGER IF EXISTS lot_guard_update');
  await knex.raw('ALTER TABLE lot DROP CONSTRAINT lot_source_not_blocked');
  await knex.raw('ALTER TABLE lot DROP CONSTRAINT lot_new_source_full');
  await knex.schema.alterTable('lot', (t) => {
    t.dropForeign(['supplier_id']);
    t.dropForeign(['manufacturer_id']);
    t.dropForeign(['source_id']);
    t.dropColumns(
      'supplier_id',
      'manufacturer_id',
      'source_id',
      'source_status',
      'source_conditions',
      'first_delivery',
      'sampling_plan',
      'sample_count',
    );
  });
  await guardRows(
    knex,
    GUARDS.find((g) => g.table === 'lot')!,
  );
  for (const t of [...SOURCE_TABLES].reverse()) {
    await dropAppendOnly(knex, t);
    await knex.schema.dropTableIfExists(t);
  }
}
