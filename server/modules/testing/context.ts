/** Loading a test with what its rules need: lot, containers, scope, measurements. */
import type { Knex } from 'knex';
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import { notFound } from '../../lib/errors';
import type { LotSummary } from '../lots/contract';
import * as lots from '../lots/repo';
import type { AttemptScope, ContainerRef } from './outcome';
import type { MeasurementSummary } from './contract';
import * as repo from './repo';

export interface TestContext {
  test: repo.TestRow;
  lot: LotSummary;
  containers: ContainerRef[];
  scope: AttemptScope;
  measurements: MeasurementSummary[];
}

/** Scope of an attempt: the containers QA authorised for a retest, else all (null). */
export async function scopeOf(
  db: Db,
  test: Pick<repo.TestRow, 'id' | 'retest_of_investigation_id'>,
): Promise<AttemptScope> {
  if (!test.retest_of_investigation_id) return { testId: test.id, containerIds: null };
  const inv = await db('investigation').where({ id: test.retest_of_investigation_id }).first();
  return { testId: test.id, containerIds: parseJson<number[]>(inv?.retest_containers, []) };
}

export async function scopesOf(db: Db, tests: repo.TestRow[]): Promise<Map<number, AttemptScope>> {
  const out = new Map<number, AttemptScope>();
  for (const t of tests) out.set(t.id, await scopeOf(db, t));
  return out;
}

/** Loads the context; with lock=true the test row is locked FOR UPDATE (call inside a transaction). */
export async function loadContext(db: Knex | Knex.Transaction, testId: number, lock = false): Promise<TestContext> {
  const test = lock ? await repo.lockTest(db, testId) : await repo.findTest(db, testId);
  if (!test) throw notFound('The identity test');
  const lot = await lots.findLot(db, test.lot_id);
  if (!lot) throw notFound('The lot');
  const containers = (await lots.containersOf(db, test.lot_id)).map((c) => ({ id: c.id, seq: c.seq, label: c.label }));
  const scope = await scopeOf(db, test);
  const measurements = await repo.measurementsOfTest(db, testId);
  return { test, lot, containers, scope, measurements };
}
