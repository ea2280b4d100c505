/**
 * The ordered list of migrations. Statically imported so that tsx, vitest and the server
 * all run them the same way (knex's directory loader cannot read .ts under vitest).
 * To add a migration: create NNN_name.ts with up/down and append it here.
 */
import type { Knex } from 'knex';
import * as m001 from './001_core';
import * as m002 from './002_library';
import * as m003 from './003_testing';
import * as m006 from './006_certificates';
import * as m007 from './007_audit_indexes';
import * as m008 from './008_job_lease';

interface Migration {
  up(knex: Knex): Promise<void>;
  down(knex: Knex): Promise<void>;
}

export const migrations: [string, Migration][] = [
  ['001_core', m001],
  ['002_library', m002],
  ['003_testing', m003],
  ['006_certificates', m006],
  ['007_audit_indexes', m007],
  ['008_job_lease', m008],
];

export const migrationSource: Knex.MigrationSource<[string, Migration]> = {
  getMigrations: async () => migrations,
  getMigrationName: (m) => m[0],
  getMigration: async (m) => m[1],
};

/** Tables the runtime account may only read and append to (no UPDATE, no DELETE). */
export const appendOnlyTables = ['audit_event', 'e_signature', 'stored_file', 'certificate', 'measurement'];
