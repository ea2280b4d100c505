/**
 * QA disposition (issue 14 item 5): the release checks recorded for a lot, and QA's signed
 * release or rejection, kept apart from the identity certificate (which stays a statement of
 * identity). Both append-only. The lot gains the retest date and a pointer to its disposition; its
 * guard now lets a lot become released only through a release record of this very lot, and lets QA
 * reject a lot whose identity has not failed (e.g. a certificate of analysis out of specification).
 */
import type { Knex } from 'knex';
import { appendOnly, dropAppendOnly, guardRows, type GuardSpec } from '../protect';
import { lotGuard140 } from './140_suppliers';

export const DISPOSITION_TABLES = ['lot_check', 'lot_disposition'];

export function lotGuard143(): GuardSpec {
  const base = lotGuard140();
  const identity = base.states!.find((s) => s.column === 'identity_status')!;
  return {
    ...base,
    setOnce: [...(base.setOnce ?? []), 'retest_date', 'disposition_id'],
    states: [
      {
        ...identity,
        transitions: [
          ...identity.transitions,
          ['awaiting-testing', 'rejected'],
          ['passed', 'rejected'],
          ['retest-authorised', 'rejected'],
        ],
        frozen: [
          { states: ['passed'], except: ['updated_at', 'certificate_id', 'status', 'retest_date', 'disposition_id'] },
          { states: ['rejected'], except: ['updated_at', 'disposition_id'] },
        ],
      },
      ...base.states!.filter((s) => s.column !== 'identity_status'),
    ],
    checks: [
      ...(base.checks ?? []),
      {
        sql:
          "NOT (NEW.status = 'released' AND NOT (OLD.status <=> 'released')) OR EXISTS (SELECT 1 FROM lot_disposition d " +
          "WHERE d.id = NEW.disposition_id AND d.lot_id = NEW.id AND d.decision = 'released')",
        message: 'a lot is released only through a signed release record of this lot',
      },
      {
        sql:
          'NEW.disposition_id <=> OLD.disposition_id OR EXISTS (SELECT 1 FROM lot_disposition d ' +
          'WHERE d.id = NEW.disposition_id AND d.lot_id = NEW.id)',
        message: 'disposition_id must name a disposition of this lot',
      },
    ],
  };
}

export async function up(knex: Knex): Promise<void> {
  await knex.schema.createTable('lot_check', (t) => {
    t.increments('id').primary();
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.string('check_key', 40).notNullable();
    t.string('check_kind', 24).notNullable();
    t.integer('profile_id').unsigned().notNullable().references('material_profile.id');
    t.string('outcome', 20).notNullable(); // conforms, does-not-conform
    t.string('reference', 200).nullable();
    t.text('note').nullable();
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.integer('recorded_by').unsigned().notNullable().references('app_user.id');
    t.datetime('recorded_at', { precision: 3 }).notNullable();
    t.index(['lot_id', 'check_key', 'id']);
  });
  await knex.raw(
    "ALTER TABLE lot_check ADD CONSTRAINT lot_check_outcome CHECK (outcome IN ('conforms', 'does-not-conform'))",
  );
  await knex.raw(
    "ALTER TABLE lot_check ADD CONSTRAINT lot_check_reference CHECK (check_kind NOT IN ('external-test', 'alternative-identity') OR CHAR_LENGTH(TRIM(IFNULL(reference, ''))) > 0)",
  );

  await knex.schema.createTable('lot_disposition', (t) => {
    t.increments('id').primary();
    t.integer('lot_id').unsigned().notNullable().references('lot.id');
    t.string('decision', 16).notNullable(); // released, rejected
    t.text('reason').nullable();
    t.date('retest_date').nullable();
    t.integer('certificate_id').unsigned().nullable().references('certificate.id');
    t.integer('profile_id').unsigned().nullable().references('material_profile.id');
    t.text('conditions', 'longtext').notNullable(); // JSON: the release conditions as checked
    t.integer('signature_id').unsigned().notNullable().references('e_signature.id');
    t.integer('decided_by').unsigned().notNullable().references('app_user.id');
    t.datetime('decided_at', { precision: 3 }).notNullable();
    t.index(['lot_id']);
  });
  await knex.raw(
    "ALTER TABLE lot_disposition ADD CONSTRAINT lot_disposition_decision CHECK ((decision = 'released' AND retest_date IS NOT NULL) OR " +
      "(decision = 'rejected' AND CHAR_LENGTH(TRIM(IFNULL(reason, ''))) >= 10))",
  );

  await knex.schema.alterTable('lot', (t) => {
    t.date('retest_date').nullable();
    t.integer('disposition_id').unsigned().nullable().references('lot_disposition.id');
  });
  for (const t of DISPOSITION_TABLES) await appendOnly(knex, t);
  await guardRows(knex, lotGuard143());
}

export async function down(knex: Knex): Promise<void> {
  await knex.raw('DROP TRIGGER IF EXISTS lot_guard_update');
  await knex.schema.alterTable('lot', (t) => {
    t.dropForeign(['disposition_id']);
    t.dropColumns('retest_date', 'disposition_id');
  });
  await guardRows(knex, lotGuard140());
  for (const t of [...DISPOSITION_TABLES].reverse()) {
    await dropAppendOnly(knex, t);
    await knex.schema.dropTableIfExists(t);
  }
}
