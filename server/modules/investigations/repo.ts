/** Data access of investigations. */
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import type { AppUserRow, IdentityTestRow, InvestigationRow, LotRow, MaterialRow } from '../../lib/db-tables';
import { oneOf, oneOfOrNull } from '../../lib/db';
import {
  INVESTIGATION_DECISIONS,
  INVESTIGATION_KINDS,
  INVESTIGATION_STATUSES,
  type FailingContainer,
  type InvestigationSummary,
  type Phase1Record,
  type TrendSubject,
} from './contract';

/** An investigation with its lot's number, material name, test attempt and decider (left joins: a trend investigation has no lot or test). */
type Joined = InvestigationRow & {
  lot_number: LotRow['lot_number'] | null;
  m_name: MaterialRow['name'] | null;
  attempt: IdentityTestRow['attempt'] | null;
  d_name: AppUserRow['full_name'] | null;
};

export function toSummary(r: Joined): InvestigationSummary {
  const trend = parseJson<TrendSubject | null>(r.subject, null);
  return {
    id: r.id,
    number: r.number,
    kind: oneOf(INVESTIGATION_KINDS, r.kind, `investigation ${r.number} kind`),
    lotId: r.lot_id,
    lotNumber: r.lot_number ?? null,
    materialName: r.m_name ?? trend?.signal.materialName ?? '',
    testId: r.test_id,
    attempt: r.attempt ?? null,
    trend,
    status: oneOf(INVESTIGATION_STATUSES, r.status, `investigation ${r.number} status`),
    decision: oneOfOrNull(INVESTIGATION_DECISIONS, r.decision, `investigation ${r.number} decision`),
    failing: parseJson<FailingContainer[]>(r.failing, []),
    phase1: parseJson<Phase1Record | null>(r.phase1, null),
    justification: r.justification,
    retestContainerIds: parseJson<number[]>(r.retest_containers, []),
    openedAt: new Date(r.opened_at).toISOString(),
    decidedBy: r.decided_by ? { id: r.decided_by, name: r.d_name ?? '' } : null,
    closedAt: r.closed_at ? new Date(r.closed_at).toISOString() : null,
    updatedAt: new Date(r.updated_at).toISOString(),
  };
}

export function query(db: Db) {
  // a trend investigation holds no lot or test (db/migrations/155_trend_investigation.ts)
  return db('investigation as i')
    .leftJoin('lot as l', 'l.id', 'i.lot_id')
    .leftJoin('material as m', 'm.id', 'l.material_id')
    .leftJoin('identity_test as t', 't.id', 'i.test_id')
    .leftJoin('app_user as d', 'd.id', 'i.decided_by')
    .select<Joined[]>('i.*', 'l.lot_number', 'm.name as m_name', 't.attempt', 'd.full_name as d_name');
}

export async function findInvestigation(db: Db, id: number): Promise<InvestigationSummary | undefined> {
  const r = await query(db).where('i.id', id).first();
  return r ? toSummary(r) : undefined;
}

export const lockInvestigation = (db: Db, id: number): Promise<InvestigationRow | undefined> =>
  db('investigation').where({ id }).forUpdate().first();

export async function listInvestigations(
  db: Db,
  f: { state: 'open' | 'all'; lotId?: number },
): Promise<InvestigationSummary[]> {
  const q = query(db).orderBy('i.id', 'desc').limit(500);
  if (f.state === 'open') q.whereIn('i.status', ['open', 'phase1-recorded', 'retest-authorised']);
  if (f.lotId) q.where('i.lot_id', f.lotId);
  return (await q).map(toSummary);
}

export const investigationRowsOfLot = (db: Db, lotId: number): Promise<InvestigationRow[]> =>
  db('investigation').where({ lot_id: lotId }).orderBy('id');
