/**
 * Method control (four eyes) and the validation record (docs/methods.md):
 * - gate_override: a QA manager's signed request to approve a method version or a reference although
 *   the specificity gate refuses it (justification, change-control reference, the gate result it
 *   overrides); append-only. Its signature must be the requester's "gate-override-requested"
 *   signature of the same record.
 * - gate_override_confirmation: the second QA manager's confirmation, at most one per request, never
 *   by the requester (trigger); its signature is the approval signature of the record; append-only.
 * - method_approval: what an approval of a method version signed besides the method: the validation
 *   record (PDF in stored_file, its SHA-256), the first references approved with it, the gate report
 *   and the override used; append-only, one per version.
 * - material_ir_suitability: QA's signed decisions "identity by IR not suitable" (with the test that
 *   replaces it) and back; the latest row of a material is in force; append-only.
 * - attempt_pin: the method version and reference set a test attempt started with; append-only.
 * A trigger on identity_method refuses, for every account, an approval signed by the version's author
 * or of a material whose latest IR decision is "not suitable".
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly } from '../protect';

const TABLES = [
  'gate_override',
  'gate_override_confirmation',
  'method_approval',
  'material_ir_suitability',
  'attempt_pin',
] as const;

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('gate_override', (t) => {
    t.increments('id').primary();
    t.string('entity_type', 40).notNullable(); // identity_method, reference_spectrum
    t.integer('entity_id').unsigned().notNullable();
    t.text('justification').notNullable();
    t.string('change_control', 80).notNullable();
    t.string('gate_sha256', 64).notNullable();
    t.text('gate', 'mediumtext').notNullable(); // JSON: the refusal overridden
    t.integer('requested_by').unsigned().notNullable().references('app_user.id');
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.datetime('requested_at', { precision: 3 }).notNullable();
    t.index(['entity_type', 'entity_id']);
  });
  await knex.schema.createTable('gate_override_confirmation', (t) => {
    t.increments('id').primary();
    t.integer('override_id').unsigned().notNullable().unique().references('gate_override.id');
    t.integer('confirmed_by').unsigned().notNullable().references('app_user.id');
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.datetime('confirmed_at', { precision: 3 }).notNullable();
  });
  await knex.schema.createTable('method_approval', (t) => {
    t.increments('id').primary();
    t.integer('method_id').unsigned().notNullable().unique().references('identity_method.id');
    t.integer('validation_file_id').unsigned().notNullable().references('stored_file.id');
    t.string('validation_sha256', 64).notNullable();
    t.text('validation', 'mediumtext').notNullable(); // JSON content of the validation record
    t.text('first_reference_ids').notNullable(); // JSON array, empty unless the first version
    t.integer('gate_override_id').unsigned().nullable().references('gate_override.id');
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.datetime('created_at', { precision: 3 }).notNullable();
  });
  await knex.schema.createTable('material_ir_suitability', (t) => {
    t.increments('id').primary();
    t.integer('material_id').unsigned().notNullable().references('material.id');
    t.boolean('suitable').notNullable();
    t.text('replacement_test').nullable();
    t.text('reason').notNullable();
    t.integer('decided_by').unsigned().notNullable().references('app_user.id');
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.datetime('decided_at', { precision: 3 }).notNullable();
    t.index(['material_id', 'id']);
  });
  await knex.schema.createTable('attempt_pin', (t) => {
    t.increments('id').primary();
    t.integer('test_id').unsigned().notNullable().unique().references('identity_test.id');
    t.integer('method_id').unsigned().notNullable().references('identity_method.id');
    t.text('reference_ids').notNullable(); // JSON array
    t.datetime('created_at', { precision: 3 }).notNullable();
  });
  for (const t of TABLES) await appendOnly(knex, t);

  await knex.raw(`CREATE TRIGGER gate_override_check BEFORE INSERT ON gate_override FOR EACH ROW
BEGIN
  IF NOT EXISTS (SELECT 1 FROM e_signature s WHERE s.id = NEW.signature_id AND s.user_id = NEW.requested_by
      AND s.entity_type = NEW.entity_type AND BINARY s.entity_id = BINARY CAST(NEW.entity_id AS CHAR)
      AND s.meaning = 'gate-override-requested') THEN
    SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'an override request needs the requester''s gate-override-requested signature of the record';
  END IF;
END`);
  await knex.raw(`CREATE TRIGGER gate_override_confirmation_check BEFORE INSERT ON gate_override_confirmation FOR EACH ROW
BEGIN
  IF NOT EXISTS (SELECT 1 FROM gate_override o WHERE o.id = NEW.override_id AND o.requested_by <> NEW.confirmed_by) THEN
    SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'an override is confirmed by a second QA manager, never by its requester';
  END IF;
  IF NOT EXISTS (SELECT 1 FROM gate_override o JOIN e_signature s ON s.entity_type = o.entity_type
        AND BINARY s.entity_id = BINARY CAST(o.entity_id AS CHAR)
      WHERE o.id = NEW.override_id AND s.id = NEW.signature_id AND s.user_id = NEW.confirmed_by
        AND s.meaning IN ('approved', 'approved-with-justification')) THEN
    SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'an override confirmation needs the confirmer''s approval signature of the record';
  END IF;
END`);
  await knex.raw(`CREATE TRIGGER material_ir_suitability_check BEFORE INSERT ON material_ir_suitability FOR EACH ROW
BEGIN
  IF NOT EXISTS (SELECT 1 FROM e_signature s WHERE s.id = NEW.signature_id AND s.user_id = NEW.decided_by
      AND s.entity_type = 'material' AND BINARY s.entity_id = BINARY CAST(NEW.material_id AS CHAR)
      AND s.meaning = 'ir-suitability-decided') THEN
    SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'an IR suitability decision needs the decider''s signature of the material';
  END IF;
END`);
  await knex.raw(`CREATE TRIGGER identity_method_four_eyes BEFORE UPDATE ON identity_method FOR EACH ROW
BEGIN
  IF NEW.approved_signature_id IS NOT NULL AND NOT (NEW.approved_signature_id <=> OLD.approved_signature_id) THEN
    IF EXISTS (SELECT 1 FROM e_signature s WHERE s.id = NEW.approved_signature_id AND s.user_id = NEW.created_by) THEN
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'the author of a method version never approves it';
    END IF;
    IF EXISTS (SELECT 1 FROM material_ir_suitability d WHERE d.material_id = NEW.material_id
        AND d.id = (SELECT MAX(d2.id) FROM material_ir_suitability d2 WHERE d2.material_id = NEW.material_id)
        AND d.suitable = 0) THEN
      SIGNAL SQLSTATE '45000' SET MESSAGE_TEXT = 'no IR method is approved for a material marked identity by IR not suitable';
    END IF;
  END IF;
END`);
}

export async function down(knex: Knex): Promise<void> {
  for (const trg of [
    'identity_method_four_eyes',
    'material_ir_suitability_check',
    'gate_override_confirmation_check',
    'gate_override_check',
  ])
    await knex.raw(`DROP TRIGGER IF EXISTS ${trg}`);
  for (const t of [...TABLES].reverse()) {
    await dropAppendOnly(knex, t);
    await knex.schema.dropTableIfExists(t);
  }
}
