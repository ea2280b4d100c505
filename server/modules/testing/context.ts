/** Loading a test with what its rules need: lot, containers, scope, measurements. */
import type { Knex } from 'knex';
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import { notFound } from '../../lib/errors';
import type { LotSummary } from '../lots/contract';
import * as lots from '../lots';
import { latestByContainer, type AttemptScope, type ContainerRef } from './outcome';
import type { MeasurementSummary } from './contract';
import * as repo from './repo';
import { sampledContainerIds } from '../sampling';

export interface TestContext {
  test: repo.TestRow;
  lot: LotSummary;
  /** The containers under test: the sampled ones (every container for a lot received before sampling records). */
  containers: ContainerRef[];
  /** Every container of the lot, sampled or not. */
  allContainers: ContainerRef[];
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
  const allContainers = (await lots.containersOf(db, test.lot_id)).map((c) => ({
    id: c.id,
    seq: c.seq,
    label: c.label,
  }));
  const containers = await underTest(db, test.lot_id, allContainers);
  const scope = await scopeOf(db, test);
  const measurements = await repo.measurementsOfTest(db, testId);
  return { test, lot, containers, allContainers, scope, measurements };
}

/**
 * The containers of a lot under test: the sampled ones (issue 14 item 3: under a reduced plan
 * "every container has a result" means every sampled container), or all of them for a lot received
 * before sampling records existed.
 */
export async function underTest<C extends { id: number }>(db: Db, lotId: number, all: C[]): Promise<C[]> {
  const sampled = await sampledContainerIds(db, lotId);
  if (sampled === null) return all;
  const set = new Set(sampled);
  return all.filter((c) => set.has(c.id));
}

/** What a signature of the test covers: every container's latest result and the versions used. */
export function signedContent(ctx: TestContext) {
  const latest = latestByContainer(ctx.measurements, ctx.test.id);
  return {
    lot: ctx.lot.lotNumber,
    testId: ctx.test.id,
    attempt: ctx.test.attempt,
    methodId: ctx.test.method_id,
    containers: ctx.containers
      .filter((c) => latest.has(c.id))
      .map((c) => {
        const m = latest.get(c.id)!;
        return {
          label: c.label,
          measurementId: m.id,
          verdict: m.verdict,
          matchScore: m.matchScore,
          fileSha256: m.file.sha256,
          methodId: m.methodId,
          referenceIds: m.referenceIds,
          instrumentCheckId: m.instrumentCheckId,
        };
      }),
  };
}
