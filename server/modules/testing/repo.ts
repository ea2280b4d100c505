/** Data access of identity tests (attempts) and measurements. Measurements are insert-only. */
import { oneOf, parseJson, type Db } from '../../lib/db';
import type { IdentityTestInsert, IdentityTestRow, MeasurementInsert, MeasurementRow } from '../../lib/db-tables';
import type { MeasurementSummary, MeasurementVerdict, TestStatus } from './contract';

/** An attempt at a lot's identity test (table identity_test). */
export type TestRow = IdentityTestRow;
export type { MeasurementRow };

const TEST_STATUSES = [
  'in-progress',
  'awaiting-verification',
  'verified',
  'returned',
] as const satisfies readonly TestStatus[];
const VERDICTS = ['pass', 'fail', 'invalid'] as const satisfies readonly MeasurementVerdict[];
export const testStatusOf = (v: string): TestStatus => oneOf(TEST_STATUSES, v, 'test status');
export const verdictOf = (v: string): MeasurementVerdict => oneOf(VERDICTS, v, 'measurement verdict');

type MeasurementJoined = Omit<MeasurementRow, 'result'> & {
  label: string;
  f_name: string;
  f_sha: string;
  f_size: number;
  u_name: string;
};

export function toMeasurementSummary(r: MeasurementJoined): MeasurementSummary {
  return {
    id: r.id,
    testId: r.test_id,
    containerId: r.container_id,
    label: r.label,
    verdict: verdictOf(r.verdict),
    matchScore: r.match_score === null ? null : Number(r.match_score),
    file: { id: r.file_id, name: r.f_name, sha256: r.f_sha, size: r.f_size },
    instrumentId: r.instrument_id,
    instrumentCheckId: r.instrument_check_id,
    methodId: r.method_id,
    referenceIds: parseJson<number[]>(r.reference_ids, []),
    engineVersion: r.engine_version,
    authorisedByInvestigationId: r.authorised_by_investigation_id,
    createdBy: { id: r.created_by, name: r.u_name },
    createdAt: new Date(r.created_at).toISOString(),
  };
}

function measurementQuery(db: Db) {
  return db('measurement as ms')
    .join('container as c', 'c.id', 'ms.container_id')
    .join('stored_file as f', 'f.id', 'ms.file_id')
    .join('app_user as u', 'u.id', 'ms.created_by')
    .select<MeasurementJoined[]>(
      'ms.id',
      'ms.test_id',
      'ms.container_id',
      'ms.file_id',
      'ms.instrument_id',
      'ms.instrument_check_id',
      'ms.method_id',
      'ms.reference_ids',
      'ms.verdict',
      'ms.match_score',
      'ms.engine_version',
      'ms.authorised_by_investigation_id',
      'ms.created_by',
      'ms.created_at',
      'c.label',
      'f.file_name as f_name',
      'f.sha256 as f_sha',
      'f.size as f_size',
      'u.full_name as u_name',
    );
}

/** Every measurement of a lot (all attempts), oldest first. */
export async function measurementsOfLot(db: Db, lotId: number): Promise<MeasurementSummary[]> {
  const rows = await measurementQuery(db).where('c.lot_id', lotId).orderBy('ms.id');
  return rows.map(toMeasurementSummary);
}

export async function measurementsOfTest(db: Db, testId: number): Promise<MeasurementSummary[]> {
  const rows = await measurementQuery(db).where('ms.test_id', testId).orderBy('ms.id');
  return rows.map(toMeasurementSummary);
}

export async function findMeasurementSummary(db: Db, id: number): Promise<MeasurementSummary | undefined> {
  const r = await measurementQuery(db).where('ms.id', id).first();
  return r ? toMeasurementSummary(r) : undefined;
}

export const findMeasurementRow = async (db: Db, id: number): Promise<MeasurementRow | undefined> =>
  db('measurement').where({ id }).first();

export const findTest = async (db: Db, id: number): Promise<TestRow | undefined> =>
  db('identity_test').where({ id }).first();
export const lockTest = async (db: Db, id: number): Promise<TestRow | undefined> =>
  db('identity_test').where({ id }).forUpdate().first();
export const testsOfLot = async (db: Db, lotId: number): Promise<TestRow[]> =>
  db('identity_test').where({ lot_id: lotId }).orderBy('attempt');

export async function insertTest(db: Db, row: Omit<IdentityTestInsert, 'id' | 'row_version'>): Promise<number> {
  const [id] = await db('identity_test').insert({ ...row, row_version: 0 });
  return id;
}

export async function insertMeasurement(db: Db, row: MeasurementInsert): Promise<number> {
  const [id] = await db('measurement').insert(row);
  return id;
}

/** Names of accounts by id, for display. */
export async function userNames(db: Db, ids: (number | null | undefined)[]): Promise<Map<number, string>> {
  const want = [...new Set(ids.filter((x): x is number => typeof x === 'number'))];
  if (!want.length) return new Map();
  const rows = await db('app_user').whereIn('id', want).select('id', 'full_name');
  return new Map(rows.map((r) => [r.id, r.full_name]));
}
