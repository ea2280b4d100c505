/**
 * The lot and container state machine (docs/architecture.md, "The lot and container state
 * machine"): the only writer of `lot.status`, `lot.identity_status` and the `container_status`
 * history. Every change checks its transition here (409 with a sentence when refused) before the
 * row is written, and writes the audit event that records it in the caller's transaction. The
 * database guards the same transitions once more (lot: guardRows in db/migrations/050 and 143;
 * container_status: append-only).
 */
import type { Knex } from 'knex';
import { appendAudit, type AuditInput } from '../../lib/audit';
import type { Db } from '../../lib/db';
import { AppError, conflict } from '../../lib/errors';
import type { ContainerStatus } from '../sampling/contract';
import type { IdentityStatus, LotStatus } from './contract';

/** A new lot: in quarantine, awaiting its identity test. */
export const RECEIVED_LOT = { status: 'quarantine', identity_status: 'awaiting-testing' } as const satisfies {
  status: LotStatus;
  identity_status: IdentityStatus;
};

/** The identity statuses a lot may move to from each status (the lot guard of db/migrations/143 holds the same list). */
export const IDENTITY_TRANSITIONS: Record<IdentityStatus, readonly IdentityStatus[]> = {
  'awaiting-testing': ['testing', 'rejected'],
  testing: ['awaiting-verification'],
  'awaiting-verification': ['passed', 'failed', 'testing', 'retest-authorised'],
  passed: ['rejected'],
  failed: ['retest-authorised', 'rejected'],
  'retest-authorised': ['testing', 'rejected'],
  rejected: [],
};

/** The disposition statuses of a lot. */
export const LOT_TRANSITIONS: Record<LotStatus, readonly LotStatus[]> = {
  quarantine: ['released', 'rejected'],
  released: [],
  rejected: [],
};

/** Each container moves quarantine -> sampled -> released or rejected, and is blocked while an investigation holds it. */
export const CONTAINER_TRANSITIONS: Record<ContainerStatus, readonly ContainerStatus[]> = {
  quarantine: ['sampled', 'released', 'rejected'],
  sampled: ['released', 'rejected', 'blocked'],
  blocked: ['sampled', 'rejected'],
  released: [],
  rejected: [],
};

export interface LotState {
  status: LotStatus;
  identityStatus: IdentityStatus;
}

/**
 * Why the lot cannot move from `from` to `to`, or null when it can. Staying in the same status is
 * allowed (nothing moves). A release also needs a passed identity, and a rejection rejects the
 * identity with it (the lot guard's checks).
 */
export function lotTransitionRefusal(from: LotState, to: Partial<LotState>): string | null {
  const identity = to.identityStatus ?? from.identityStatus;
  const status = to.status ?? from.status;
  if (identity !== from.identityStatus && !IDENTITY_TRANSITIONS[from.identityStatus].includes(identity))
    return `A lot whose identity status is ${from.identityStatus} cannot move to ${identity}.`;
  if (status !== from.status && !LOT_TRANSITIONS[from.status].includes(status))
    return `A lot that is ${from.status} cannot become ${status}.`;
  if (status === 'released' && from.status !== 'released' && identity !== 'passed')
    return 'Only a lot whose identity passed can be released.';
  if (status === 'rejected' && from.status !== 'rejected' && identity !== 'rejected')
    return 'A lot is rejected together with its identity status.';
  return null;
}

/** Why a container cannot move from `from` to `to`, or null when it can (staying put is allowed). */
export function containerTransitionRefusal(from: ContainerStatus, to: ContainerStatus): string | null {
  if (from === to || CONTAINER_TRANSITIONS[from].includes(to)) return null;
  return `A container that is ${from} cannot become ${to}.`;
}

/**
 * How the change is recorded in the audit trail: the event written here, right after the change,
 * or the name of the event of the same transaction that records it (e.g. `test.performed`, whose
 * before/after carry the move).
 */
export type TransitionAudit = AuditInput | { recordedBy: string };

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
  const row = await trx('lot').where({ id: r.lotId }).forUpdate().first('status', 'identity_status');
  if (!row) throw new AppError(404, 'NOT_FOUND', `Lot ${r.lotId} does not exist.`);
  const from: LotState = { status: row.status, identityStatus: row.identity_status };
  const why = lotTransitionRefusal(from, r.to);
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

/** Current status of each container of a lot (quarantine where no row exists: containers stored before migration 142). */
export async function currentStatuses(db: Db, lotId: number): Promise<Map<number, ContainerStatus>> {
  const rows = await db('container_status as s')
    .join('container as c', 'c.id', 's.container_id')
    .where('c.lot_id', lotId)
    .orderBy('s.id')
    .select('s.container_id', 's.status');
  const out = new Map<number, ContainerStatus>();
  for (const c of await db('container').where({ lot_id: lotId }).select('id')) out.set(c.id, 'quarantine');
  for (const r of rows) out.set(r.container_id, r.status);
  return out;
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
    audit?: TransitionAudit;
  },
): Promise<number[]> {
  const current = await currentStatuses(trx, r.lotId);
  const now = new Date();
  const rows = [];
  for (const id of r.containerIds) {
    const from = current.get(id);
    if (from === undefined) throw conflict(`Container ${id} is not a container of this lot.`);
    if (from === r.status) continue;
    const why = containerTransitionRefusal(from, r.status);
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
