/**
 * The lot record page (GET /api/lots/:id): a lot with its containers, test attempts, measurements,
 * investigations and certificate state. It sits above lots, testing and investigations and composes
 * them, so that those modules can use the lot lookups and the state machine without a cycle
 * (docs/architecture.md, "Direction of imports").
 */
import type { Knex } from 'knex';
import type { Actor } from '../../lib/audit';
import { notFound } from '../../lib/errors';
import { signaturesFor } from '../../lib/esign';
import * as inv from '../investigations';
import * as lots from '../lots';
import type { LotCreate, LotDetail } from './contract';
import * as testing from '../testing';

/** Receives a lot (lots' `receiveLot`) and answers with its record page. */
export async function receiveLotRecord(
  db: Knex,
  actor: Actor,
  input: LotCreate,
  ip: string | null,
  siteTimeZone: string,
): Promise<LotDetail> {
  const { id } = await lots.receiveLot(db, actor, input, ip, siteTimeZone);
  return getLotDetail(db, id);
}

export async function getLotDetail(db: Knex, id: number): Promise<LotDetail> {
  const lot = await lots.findLot(db, id);
  if (!lot) throw notFound('The lot');
  const containers = await lots.containersOf(db, id);
  const tests = await testing.testsOfLot(db, id);
  const scopes = await testing.scopesOf(db, tests);
  const measurements = await testing.measurementsOfLot(db, id);
  const refs = await testing.underTest(
    db,
    id,
    containers.map((c) => ({ id: c.id, seq: c.seq, label: c.label })),
  );
  const sampledIds = new Set(refs.map((c) => c.id));
  const statuses = await lots.currentStatuses(db, id);
  const samplingRow = await db('sampling_record').where({ lot_id: id }).first('sampled_at');
  const effective = testing.effectiveResults(refs, tests, scopes, measurements);
  const current =
    [...tests].reverse().find((t) => t.status === 'in-progress' || t.status === 'awaiting-verification') ?? null;
  const latestCurrent: ReturnType<typeof testing.latestByContainer> = current
    ? testing.latestByContainer(measurements, current.id)
    : new Map();
  const names = await testing.userNames(
    db,
    tests.flatMap((t) => [t.performed_by, t.verified_by]),
  );
  const investigations = (await inv.investigationRowsOfLot(db, id)).map((r) => ({
    id: r.id,
    number: r.number,
    status: r.status,
    decision: r.decision,
    openedAt: new Date(r.opened_at).toISOString(),
    closedAt: r.closed_at ? new Date(r.closed_at).toISOString() : null,
  }));
  const certRow = await db('certificate')
    .where({ lot_id: id })
    .orderBy('id', 'desc')
    .first('id', 'number', 'issued_at');
  const certificate =
    certRow != null
      ? {
          state: 'issued' as const,
          id: certRow.id,
          number: certRow.number,
          issuedAt: new Date(certRow.issued_at).toISOString(),
        }
      : lot.identityStatus === 'passed'
        ? { state: 'pending' as const }
        : { state: 'none' as const };
  const testSummaries = [];
  for (const t of tests) {
    testSummaries.push({
      id: t.id,
      attempt: t.attempt,
      status: testing.testStatusOf(t.status),
      retestOfInvestigationId: t.retest_of_investigation_id,
      instrumentId: t.instrument_id,
      methodId: t.method_id,
      createdAt: new Date(t.created_at).toISOString(),
      performedBy: t.performed_by ? { id: t.performed_by, name: names.get(t.performed_by) ?? '' } : null,
      verifiedBy: t.verified_by ? { id: t.verified_by, name: names.get(t.verified_by) ?? '' } : null,
      returnedReason: t.returned_reason,
      measurements: measurements.filter((m) => m.testId === t.id).length,
      signatures: await signaturesFor(db, 'identity_test', t.id),
    });
  }
  return {
    ...lot,
    containers: containers.map((c) => {
      const e = effective.get(c.id) ?? null;
      const cur = latestCurrent.get(c.id) ?? null;
      return {
        id: c.id,
        seq: c.seq,
        label: c.label,
        effective: e,
        current: cur ? { measurementId: cur.id, verdict: cur.verdict, matchScore: cur.matchScore } : null,
        currentInScope: current
          ? (scopes.get(current.id)?.containerIds ?? null) === null ||
            scopes.get(current.id)!.containerIds!.includes(c.id)
          : false,
        measurements: measurements.filter((m) => m.containerId === c.id).length,
        status: statuses.get(c.id) ?? 'quarantine',
        sampled: sampledIds.has(c.id),
      };
    }),
    sampledAt: samplingRow
      ? new Date(samplingRow.sampled_at).toISOString()
      : lot.source.samplingPlan
        ? null
        : lot.createdAt,
    tests: testSummaries,
    currentTestId: current?.id ?? null,
    investigations,
    certificate,
  };
}
