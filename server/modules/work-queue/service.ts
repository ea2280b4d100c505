/**
 * The work queue of the signed-in user (docs/architecture.md, "The identity flow"): per role, what awaits them,
 * read from the other modules through their indexes (this module is imported by none of them).
 * - operator: lots to test (quarantine, awaiting testing, testing, returned or retest authorised)
 * - verifier: tests awaiting verification that they neither performed nor measured
 * - qa_manager: open investigations; draft references awaiting approval (not their own uploads);
 *   passed lots whose certificate could not be issued (retry action: POST /api/certificates/issue)
 * - operator and qa_manager: instruments whose instrument check is due
 * Read-only over the library and instrument tables.
 */
import type { Knex } from 'knex';
import type { InvestigationRow, LotRow, MaterialRow, ReferenceSpectrumRow } from '../../lib/db-tables';
import type { AuthUser } from '../../lib/http';
import type { Role } from '../../lib/contract';
import type { QueueItem, QueueSection, WorkQueue } from './contract';
import { pendingCertificates } from '../certificates';
import { instrumentStatus, verificationQueue } from '../testing';
import { lotsAwaitingDisposition, retestsDue } from '../disposition';
import { blockedContainers } from '../provenance';

/** Items listed per section; the count covers all. */
export const QUEUE_ITEMS = 50;
/** Items listed when one section is asked for whole (?full=key). */
export const QUEUE_FULL_ITEMS = 1000;

export async function lotsToTest(db: Knex): Promise<QueueItem[]> {
  const rows = await db('lot as l')
    .join('material as m', 'm.id', 'l.material_id')
    .where('l.status', 'quarantine')
    .whereIn('l.identity_status', ['awaiting-testing', 'testing', 'retest-authorised'])
    // sampling precedes testing: a lot under a sampling plan is listed once it is sampled
    .where((w) =>
      w.whereNull('l.sampling_plan').orWhereExists(db('sampling_record as sr').whereRaw('sr.lot_id = l.id')),
    )
    .select<
      (Pick<LotRow, 'id' | 'lot_number' | 'identity_status' | 'container_count' | 'received_date'> & {
        m_name: MaterialRow['name'];
      })[]
    >('l.id', 'l.lot_number', 'l.identity_status', 'l.container_count', 'l.received_date', 'm.name as m_name')
    .orderBy('l.id');
  const tests = rows.length
    ? await db('identity_test')
        .whereIn(
          'lot_id',
          rows.map((r) => r.id),
        )
        .select('lot_id', 'status', 'attempt')
        .orderBy('attempt')
    : [];
  return rows.map((r) => {
    const last = tests.filter((t) => t.lot_id === r.id).at(-1);
    const state =
      r.identity_status === 'retest-authorised'
        ? 'retest authorised by QA'
        : last?.status === 'returned'
          ? `attempt ${last.attempt} returned: start a new attempt`
          : last?.status === 'in-progress'
            ? `attempt ${last.attempt} in progress`
            : 'not started';
    return {
      id: r.id,
      title: `${r.lot_number} · ${r.m_name}`,
      detail: `${r.container_count} container(s), ${state}`,
      href: `/lots/${r.id}`,
    };
  });
}

/** Lots in quarantine under a sampling plan that have no sampling record yet. */
export async function lotsToSample(db: Knex): Promise<QueueItem[]> {
  const rows = await db('lot as l')
    .join('material as m', 'm.id', 'l.material_id')
    .where('l.status', 'quarantine')
    .whereNotNull('l.sampling_plan')
    .whereNotExists(db('sampling_record as sr').whereRaw('sr.lot_id = l.id'))
    .select<
      (Pick<LotRow, 'id' | 'lot_number' | 'sampling_plan' | 'sample_count' | 'container_count' | 'first_delivery'> & {
        m_name: MaterialRow['name'];
      })[]
    >(
      'l.id',
      'l.lot_number',
      'l.sampling_plan',
      'l.sample_count',
      'l.container_count',
      'l.first_delivery',
      'm.name as m_name',
    )
    .orderBy('l.id');
  return rows.map((r) => ({
    id: r.id,
    title: `${r.lot_number} · ${r.m_name}`,
    detail:
      r.sampling_plan === 'every-container'
        ? `sample every container (${r.container_count})${r.first_delivery ? ', first delivery from a new source' : ''}`
        : `sample ${r.sample_count} of ${r.container_count} containers (validated reduced plan)`,
    href: `/lots/${r.id}`,
  }));
}

export async function openInvestigations(db: Knex): Promise<QueueItem[]> {
  // an investigation of a trend signal holds no lot: its material comes from the signal
  const rows = await db('investigation as i')
    .leftJoin('lot as l', 'l.id', 'i.lot_id')
    .leftJoin('material as m', 'm.id', 'l.material_id')
    .leftJoin('trend_signal as s', 's.id', 'i.trend_signal_id')
    .leftJoin('material as sm', 'sm.id', 's.material_id')
    .whereIn('i.status', ['open', 'phase1-recorded'])
    .select<
      (Pick<InvestigationRow, 'id' | 'number' | 'status' | 'kind'> & {
        lot_number: LotRow['lot_number'] | null;
        m_name: MaterialRow['name'] | null;
        s_name: MaterialRow['name'] | null;
      })[]
    >('i.id', 'i.number', 'i.status', 'i.kind', 'l.lot_number', 'm.name as m_name', 'sm.name as s_name')
    .orderBy('i.id');
  return rows.map((r) => ({
    id: r.id,
    title: r.kind === 'trend' ? `${r.number} · trend signal` : `${r.number} · lot ${r.lot_number}`,
    detail: `${r.m_name ?? r.s_name}: ${r.status === 'open' ? 'phase I laboratory check to record' : r.kind === 'trend' ? 'conclusion to record' : 'decision to take'}`,
    href: `/investigations/${r.id}`,
  }));
}

export async function referencesToApprove(db: Knex, user: AuthUser): Promise<QueueItem[]> {
  const rows = await db('reference_spectrum as r')
    .join('material as m', 'm.id', 'r.material_id')
    .where('r.status', 'draft')
    .whereNot('r.created_by', user.id)
    .select<(Pick<ReferenceSpectrumRow, 'id' | 'code' | 'material_id'> & { m_name: MaterialRow['name'] })[]>(
      'r.id',
      'r.code',
      'r.material_id',
      'm.name as m_name',
    )
    .orderBy('r.id');
  return rows.map((r) => ({
    id: r.id,
    title: `${r.code} · ${r.m_name}`,
    detail: 'Draft reference awaiting approval',
    href: `/library/materials/${r.material_id}`,
  }));
}

export async function instrumentChecksDue(db: Knex): Promise<QueueItem[]> {
  const ids = await db('instrument').where({ active: 1 }).select('id').orderBy('name');
  const out: QueueItem[] = [];
  for (const { id } of ids) {
    const s = await instrumentStatus(db, id);
    if (s && !s.usable)
      out.push({
        id,
        title: s.instrument.name,
        detail: s.reason ?? 'Instrument check due',
        href: `/instruments/${id}`,
      });
  }
  return out;
}

export async function workQueueFor(db: Knex, user: AuthUser, full?: string, retestNoticeDays = 30): Promise<WorkQueue> {
  const has = (r: Role) => user.roles.includes(r);
  const sections: QueueSection[] = [];
  const push = (key: QueueSection['key'], title: string, roles: Role[], items: QueueItem[]) =>
    sections.push({
      key,
      title,
      roles,
      count: items.length,
      items: items.slice(0, key === full ? QUEUE_FULL_ITEMS : QUEUE_ITEMS),
    });
  if (has('operator')) {
    push('lots-to-sample', 'Lots to sample', ['operator'], await lotsToSample(db));
    push('lots-to-test', 'Lots to test', ['operator'], await lotsToTest(db));
  }
  if (has('verifier'))
    push(
      'tests-to-verify',
      'Tests to verify',
      ['verifier'],
      (await verificationQueue(db, user)).map((t) => ({
        id: t.testId,
        title: `${t.lotNumber} · ${t.material}`,
        detail: `Attempt ${t.attempt}${t.isRetest ? ' (retest)' : ''}, ${t.containers} container(s)${t.failing ? `, ${t.failing} failing` : ''}, performed by ${t.performedBy}`,
        href: `/tests/${t.testId}/review`,
      })),
    );
  if (has('qa_manager')) {
    push('open-investigations', 'Open investigations', ['qa_manager'], await openInvestigations(db));
    push(
      'lots-awaiting-disposition',
      'Lots awaiting disposition',
      ['qa_manager'],
      (await lotsAwaitingDisposition(db)).map((r) => ({
        id: r.id,
        title: `${r.lot_number} · ${r.m_name}`,
        detail: 'Identity passed: record the release checks, then release or reject',
        href: `/lots/${r.id}`,
      })),
    );
    push(
      'retests-due',
      `Retest dates within ${retestNoticeDays} days`,
      ['qa_manager'],
      (await retestsDue(db, retestNoticeDays)).map((r) => ({
        id: r.id,
        title: `${r.lot_number} · ${r.m_name}`,
        detail: `Retest by ${new Date(r.retest_date).toISOString().slice(0, 10)}`,
        href: `/lots/${r.id}`,
      })),
    );
    push('references-to-approve', 'References to approve', ['qa_manager'], await referencesToApprove(db, user));
    push(
      'blocked-containers',
      'Blocked containers',
      ['qa_manager'],
      (await blockedContainers(db)).map((b) => ({
        id: b.containerId,
        title: `${b.label} · lot ${b.lotNumber}`,
        detail: `Blocked after ${b.invalidCount} invalid measurements: decide how to go on`,
        href: `/lots/${b.lotId}`,
      })),
    );
    push(
      'certificates-to-issue',
      'Certificates to issue',
      ['qa_manager'],
      (await pendingCertificates(db)).map((p) => ({
        id: p.lotId,
        title: `${p.lotNumber} · ${p.material}`,
        detail:
          `${p.supersedes ? 'Superseding certificate' : 'Certificate'} ${p.number ?? '(no number yet)'} not issued` +
          (p.lastProblem ? `: ${p.lastProblem}` : '') +
          (p.failures ? ` (${p.failures} failed attempt(s))` : ''),
        href: `/lots/${p.lotId}`,
        action: p.supersedes ? undefined : { kind: 'issue-certificate', lotId: p.lotId },
      })),
    );
  }
  if (has('operator') || has('qa_manager'))
    push(
      'instrument-checks-due',
      'Instruments with a check due',
      ['operator', 'qa_manager'],
      await instrumentChecksDue(db),
    );
  return { sections };
}
