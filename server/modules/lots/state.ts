/**
 * The lot and container state machine (docs/architecture.md, "The lot and container state
 * machine"): the only writer of `lot.status`, `lot.identity_status` and the `container_status`
 * history. Every change checks its transition here (409 with a sentence when refused) before the
 * row is written, and writes the audit event that records it in the caller's transaction. The
 * database guards the same transitions once more (lot: guardRows in db/migrations/050, 143 and
 * 145; container_status: append-only).
 *
 * Container status is decided here too, in one place (`currentStatuses`): the recorded life cycle,
 * and "blocked" while a hold is active on a container not yet released or rejected:
 * - an investigation that is open or has its phase I check recorded holds its failing containers;
 * - the provenance rule blocks a container after too many invalid measurements until QA releases
 *   it (container_block, server/modules/provenance/rules.ts).
 * When the last hold ends the container returns to its status before the block
 * (`recordHoldChange`).
 */
import type { Knex } from 'knex';
import { appendAudit, type AuditInput } from '../../lib/audit';
import { parseJson, type Db } from '../../lib/db';
import { AppError, conflict } from '../../lib/errors';
import { CONTAINER_STATUSES, type ContainerStatus } from '../sampling/contract';
import type { ContainerStatusRow, LotRow } from '../../lib/db-tables';
import { IDENTITY_STATUSES, LOT_STATUSES, type IdentityStatus, type LotStatus } from './contract';
import { oneOf } from '../../lib/db';

/** A new lot: in quarantine, awaiting its identity test. */
export const RECEIVED_LOT = { status: 'quarantine', identity_status: 'awaiting-testing' } as const satisfies {
  status: LotStatus;
  identity_status: IdentityStatus;
};

/**
 * The identity statuses a lot may move to from each status (the lot guard of db/migrations/145
 * holds the same list). passed -> awaiting-testing only in a retest of a released lot
 * (`lotTransitionRefusal`).
 */
export const IDENTITY_TRANSITIONS: Record<IdentityStatus, readonly IdentityStatus[]> = {
  'awaiting-testing': ['testing', 'rejected'],
  testing: ['awaiting-verification'],
  'awaiting-verification': ['passed', 'failed', 'testing', 'retest-authorised'],
  passed: ['rejected', 'awaiting-testing'],
  failed: ['retest-authorised', 'rejected'],
  'retest-authorised': ['testing', 'rejected'],
  rejected: [],
};

/** The disposition statuses of a lot; released -> quarantine only through a retest of its current release. */
export const LOT_TRANSITIONS: Record<LotStatus, readonly LotStatus[]> = {
  quarantine: ['released', 'rejected'],
  released: ['quarantine'],
  rejected: [],
};

/**
 * Each container moves quarantine -> sampled -> released or rejected; it is blocked while a hold
 * keeps it and returns to its former status (quarantine or sampled) when the last hold ends; a
 * retest of its lot puts a released container back under test (sampled, or quarantine when it
 * was not sampled).
 */
export const CONTAINER_TRANSITIONS: Record<ContainerStatus, readonly ContainerStatus[]> = {
  quarantine: ['sampled', 'released', 'rejected', 'blocked'],
  sampled: ['released', 'rejected', 'blocked'],
  blocked: ['sampled', 'quarantine', 'rejected'],
  released: ['sampled', 'quarantine'],
  rejected: [],
};

/**
 * What the database knows that a transition may need (the lot guard of db/migrations/145 checks
 * the same): whether a signed retest record names the lot's current release, and whether the lot's
 * material is not identified by IR and its replacing identity test conforms.
 */
export interface TransitionContext {
  retestOfCurrentRelease?: boolean;
  replacingIdentityConforms?: boolean;
}

export interface LotState {
  status: LotStatus;
  identityStatus: IdentityStatus;
}

/**
 * Why the lot cannot move from `from` to `to`, or null when it can. Staying in the same status is
 * allowed (nothing moves). A release also needs a passed identity (or, for a material not
 * identified by IR, a conforming replacing identity test), a rejection rejects the identity with
 * it, and a released lot returns to quarantine and "awaiting testing" only together and only
 * through a retest of its current release (the lot guard's checks).
 */
export function lotTransitionRefusal(
  from: LotState,
  to: Partial<LotState>,
  ctx: TransitionContext = {},
): string | null {
  const identity = to.identityStatus ?? from.identityStatus;
  const status = to.status ?? from.status;
  if (identity !== from.identityStatus && !IDENTITY_TRANSITIONS[from.identityStatus].includes(identity))
    return `A lot whose identity status is ${from.identityStatus} cannot move to ${identity}.`;
  if (status !== from.status && !LOT_TRANSITIONS[from.status].includes(status))
    return `A lot that is ${from.status} cannot become ${status}.`;
  const reopens = from.status === 'released' && status === 'quarantine';
  if (reopens && (identity !== 'awaiting-testing' || !ctx.retestOfCurrentRelease))
    return 'A released lot returns to quarantine only through a signed retest of its current release.';
  if (from.identityStatus === 'passed' && identity === 'awaiting-testing' && !reopens)
    return 'Identity goes back from passed to awaiting testing only when a released lot is retested.';
  if (status === 'released' && from.status !== 'released' && identity !== 'passed' && !ctx.replacingIdentityConforms)
    return 'Only a lot whose identity passed (or, for a material not identified by IR, whose replacing identity test conforms) can be released.';
  if (status === 'rejected' && from.status !== 'rejected' && identity !== 'rejected')
    return 'A lot is rejected together with its identity status.';
  return null;
}

/**
 * Why a container cannot move from `from` to `to`, or null when it can (staying put is allowed).
 * A released container goes back under test only in a retest of its lot.
 */
export function containerTransitionRefusal(
  from: ContainerStatus,
  to: ContainerStatus,
  ctx: { retest?: boolean } = {},
): string | null {
  if (from === to) return null;
  if (!CONTAINER_TRANSITIONS[from].includes(to)) return `A container that is ${from} cannot become ${to}.`;
  if (from === 'released' && !ctx.retest) return `A released container becomes ${to} only through a retest of its lot.`;
  return null;
}

/**
 * How the change is recorded in the audit trail: the event written here, right after the change,
 * or the name of the event of the same transaction that records it (e.g. `test.performed`, whose
 * before/after carry the move).
 */
export type TransitionAudit = AuditInput | { recordedBy: string };

/** Reads from the database only what the requested move needs (the same conditions as the lot guard). */
async function transitionContext(
  trx: Knex.Transaction,
  lotId: number,
  row: Pick<LotRow, 'status' | 'identity_status' | 'material_id' | 'disposition_id'>,
  to: Partial<LotState>,
): Promise<TransitionContext> {
  const ctx: TransitionContext = {};
  if (row.status === 'released' && to.status === 'quarantine') {
    const q = trx('lot_retest').where({ lot_id: lotId });
    ctx.retestOfCurrentRelease = !!(await (
      row.disposition_id === null
        ? q.whereNull('reopened_disposition_id')
        : q.where({ reopened_disposition_id: row.disposition_id })
    ).first('id'));
  }
  if (
    to.status === 'released' &&
    row.status !== 'released' &&
    (to.identityStatus ?? row.identity_status) !== 'passed'
  ) {
    const ir = await trx('material_ir_suitability')
      .where({ material_id: row.material_id })
      .orderBy('id', 'desc')
      .first('suitable');
    const alt = await trx('lot_check')
      .where({ lot_id: lotId, check_kind: 'alternative-identity', outcome: 'conforms' })
      .first('id');
    ctx.replacingIdentityConforms = !!ir && !Number(ir.suitable) && !!alt;
  }
  return ctx;
}

/**
 * Moves a lot inside the caller's transaction: locks the row, refuses (409) a transition the
 * state machine does not allow, writes the new status(es) with `set` (the disposition pointer and
 * retest date of a release), then the audit event. Returns the state before the move.
 */
export async function moveLot(
  trx: Knex.Transaction,
  r: {
    lotId: number;
    to: Partial<LotState>;
    set?: { retest_date?: string | null; disposition_id?: number };
    audit: TransitionAudit;
    now?: Date;
  },
): Promise<LotState> {
  const row = await trx('lot')
    .where({ id: r.lotId })
    .forUpdate()
    .first('status', 'identity_status', 'material_id', 'disposition_id');
  if (!row) throw new AppError(404, 'NOT_FOUND', `Lot ${r.lotId} does not exist.`);
  const from: LotState = {
    status: oneOf(LOT_STATUSES, row.status, `lot ${r.lotId} status`),
    identityStatus: oneOf(IDENTITY_STATUSES, row.identity_status, `lot ${r.lotId} identity status`),
  };
  const why = lotTransitionRefusal(from, r.to, await transitionContext(trx, r.lotId, row, r.to));
  if (why) throw conflict(why, { lotId: r.lotId, from, to: r.to });
  await trx('lot')
    .where({ id: r.lotId })
    .update({
      ...(r.to.status ? { status: r.to.status } : {}),
      ...(r.to.identityStatus ? { identity_status: r.to.identityStatus } : {}),
      ...r.set,
      updated_at: r.now ?? new Date(),
    });
  if (!('recordedBy' in r.audit)) await appendAudit(trx, r.audit);
  return from;
}

const FINAL = new Set<ContainerStatus>(['released', 'rejected']);

/** Why each container of a lot is held now (no entry: not held). */
export async function holdsOf(db: Db, lotId: number): Promise<Map<number, string[]>> {
  const out = new Map<number, string[]>();
  const add = (id: number, why: string) => out.set(id, [...(out.get(id) ?? []), why]);
  const investigations = await db('investigation')
    .where({ lot_id: lotId })
    .whereIn('status', ['open', 'phase1-recorded'])
    .select('number', 'failing');
  for (const inv of investigations)
    for (const f of parseJson<{ containerId: number }[]>(inv.failing, []))
      add(f.containerId, `held by investigation ${inv.number}`);
  const latest = db('container_block as b2')
    .join('container as c2', 'c2.id', 'b2.container_id')
    .where('c2.lot_id', lotId)
    .max('b2.id as id')
    .groupBy('b2.container_id');
  const blocks = await db('container_block')
    .whereIn('id', latest)
    .where('event', 'blocked')
    .select('container_id', 'invalid_count');
  for (const b of blocks)
    add(b.container_id, `blocked after ${b.invalid_count} invalid measurements until QA releases it`);
  return out;
}

/** The recorded life cycle of each container: its newest row, and its newest status other than blocked (quarantine where no row exists: containers stored before migration 142). */
async function recorded(
  db: Db,
  lotId: number,
): Promise<Map<number, { last: ContainerStatus; former: ContainerStatus }>> {
  const rows = await db('container_status as s')
    .join('container as c', 'c.id', 's.container_id')
    .where('c.lot_id', lotId)
    .orderBy('s.id')
    .select<Pick<ContainerStatusRow, 'container_id' | 'status'>[]>('s.container_id', 's.status');
  const out = new Map<number, { last: ContainerStatus; former: ContainerStatus }>();
  for (const c of await db('container').where({ lot_id: lotId }).select('id'))
    out.set(c.id, { last: 'quarantine', former: 'quarantine' });
  for (const r of rows) {
    const e = out.get(r.container_id)!;
    const status = oneOf(CONTAINER_STATUSES, r.status, `container ${r.container_id} status`);
    e.last = status;
    if (status !== 'blocked') e.former = status;
  }
  return out;
}

/**
 * The status of each container of a lot (the one place that decides it, see the head of this
 * file): released and rejected are final; otherwise "blocked" while a hold is active, else the
 * recorded status (a recorded block whose hold has ended returns to the status before it).
 */
export async function currentStatuses(db: Db, lotId: number): Promise<Map<number, ContainerStatus>> {
  const rec = await recorded(db, lotId);
  const holds = await holdsOf(db, lotId);
  const out = new Map<number, ContainerStatus>();
  for (const [id, r] of rec) {
    if (FINAL.has(r.last)) out.set(id, r.last);
    else if (holds.has(id)) out.set(id, 'blocked');
    else out.set(id, r.last === 'blocked' ? r.former : r.last);
  }
  return out;
}

/** The status a change starts from: the recorded one (a recorded block whose hold has ended counts as its former status). */
async function transitionFrom(db: Db, lotId: number): Promise<Map<number, ContainerStatus>> {
  const rec = await recorded(db, lotId);
  const holds = await holdsOf(db, lotId);
  const out = new Map<number, ContainerStatus>();
  for (const [id, r] of rec) out.set(id, r.last === 'blocked' && !holds.has(id) ? r.former : r.last);
  return out;
}

/**
 * Records a hold's start or end as a status change (so that a label can be printed for it),
 * inside the caller's transaction, AFTER the hold's own row was written (the hold's own audit
 * event records it): at the start the container becomes blocked; at the end it returns to its
 * status before the block, unless another hold still keeps it.
 */
export async function recordHoldChange(
  trx: Knex.Transaction,
  r: {
    lotId: number;
    containerId: number;
    held: boolean;
    reason: string;
    signatureId?: number | null;
    userId: number | null;
  },
): Promise<void> {
  if (r.held) {
    await setContainerStatus(trx, { ...r, containerIds: [r.containerId], status: 'blocked', onlyWhereAllowed: true });
    return;
  }
  if ((await holdsOf(trx, r.lotId)).has(r.containerId)) return; // another hold remains
  const rec = (await recorded(trx, r.lotId)).get(r.containerId);
  if (!rec || rec.last !== 'blocked') return;
  const why = containerTransitionRefusal('blocked', rec.former);
  if (why) throw conflict(why, { containerId: r.containerId, from: 'blocked', to: rec.former });
  await trx('container_status').insert({
    container_id: r.containerId,
    status: rec.former,
    reason: r.reason,
    signature_id: r.signatureId ?? null,
    changed_by: r.userId,
    changed_at: new Date(),
  });
}

/** The first status row of the containers of a lot just received. */
export async function recordReceivedContainers(
  trx: Knex.Transaction,
  r: { containerIds: number[]; userId: number | null; now: Date },
): Promise<void> {
  if (r.containerIds.length === 0) return;
  await trx('container_status').insert(
    r.containerIds.map((cid) => ({
      container_id: cid,
      status: 'quarantine',
      reason: 'Received',
      signature_id: null,
      changed_by: r.userId,
      changed_at: r.now,
    })),
  );
}

/**
 * Moves containers to `status` inside the caller's transaction: one append-only container_status
 * row per container that changes (who, when, why, signature), and the audit event when one is
 * given (otherwise the caller's event of the same transaction records the change). Refuses (409)
 * a change the life cycle does not allow (e.g. a released container back to sampled). Containers
 * already in the status are left as they are. Returns the containers that moved.
 */
export async function setContainerStatus(
  trx: Knex.Transaction,
  r: {
    lotId: number;
    containerIds: number[];
    status: ContainerStatus;
    reason?: string | null;
    signatureId?: number | null;
    userId: number | null;
    /** leave containers whose current status does not allow the change as they are (instead of 409) */
    onlyWhereAllowed?: boolean;
    /** a retest of the lot puts its released containers back under test (checked: the lot is back in quarantine through a retest record) */
    retest?: boolean;
    audit?: TransitionAudit;
  },
): Promise<number[]> {
  if (r.retest) {
    const lot = await trx('lot').where({ id: r.lotId }).first('status');
    const retest = await trx('lot_retest').where({ lot_id: r.lotId }).first('id');
    if (lot?.status !== 'quarantine' || !retest)
      throw conflict('Containers go back under test only after the lot was returned to quarantine by a retest.', {
        lotId: r.lotId,
      });
  }
  const current = await transitionFrom(trx, r.lotId);
  const now = new Date();
  const rows = [];
  for (const id of r.containerIds) {
    const from = current.get(id);
    if (from === undefined) throw conflict(`Container ${id} is not a container of this lot.`);
    if (from === r.status) continue;
    const why = containerTransitionRefusal(from, r.status, { retest: r.retest });
    if (why && r.onlyWhereAllowed) continue;
    if (why) throw conflict(why, { containerId: id, from, to: r.status });
    rows.push({
      container_id: id,
      status: r.status,
      reason: r.reason ?? null,
      signature_id: r.signatureId ?? null,
      changed_by: r.userId,
      changed_at: now,
    });
  }
  for (let i = 0; i < rows.length; i += 200) await trx('container_status').insert(rows.slice(i, i + 200));
  if (r.audit && !('recordedBy' in r.audit) && rows.length) await appendAudit(trx, r.audit);
  return rows.map((x) => x.container_id);
}
