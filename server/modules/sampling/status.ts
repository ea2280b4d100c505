/**
 * Container status (issue 14 item 4): each container moves quarantine -> sampled -> released or
 * rejected, and is blocked while something holds it. One append-only row per change
 * (container_status, the label printed from it); a container without rows (stored before
 * migration 142) is in quarantine.
 *
 * `currentStatuses` is the one place that decides a container's status: the recorded life cycle,
 * and "blocked" while a hold is active on a container not yet released or rejected:
 * - an investigation that is open or has its phase I check recorded holds its failing containers;
 * - the provenance rule blocks a container after too many invalid measurements until QA releases
 *   it (container_block, server/modules/provenance/rules.ts).
 * When the last hold ends the container returns to its status before the block.
 */
import type { Knex } from 'knex';
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import { conflict } from '../../lib/errors';
import type { ContainerStatus, ContainerStatusRecord } from './contract';

const ALLOWED: Record<ContainerStatus, ContainerStatus[]> = {
  quarantine: ['sampled', 'released', 'rejected', 'blocked'],
  sampled: ['released', 'rejected', 'blocked'],
  blocked: ['sampled', 'quarantine', 'rejected'],
  // a retest of the lot (QA, signed) puts its containers back under test (server/modules/disposition/retest.ts)
  released: ['sampled', 'quarantine'],
  rejected: [],
};

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

/** The recorded life cycle of each container: its newest row, and its newest status other than blocked. */
async function recorded(
  db: Db,
  lotId: number,
): Promise<Map<number, { last: ContainerStatus; former: ContainerStatus }>> {
  const rows = await db('container_status as s')
    .join('container as c', 'c.id', 's.container_id')
    .where('c.lot_id', lotId)
    .orderBy('s.id')
    .select('s.container_id', 's.status');
  const out = new Map<number, { last: ContainerStatus; former: ContainerStatus }>();
  for (const c of await db('container').where({ lot_id: lotId }).select('id'))
    out.set(c.id, { last: 'quarantine', former: 'quarantine' });
  for (const r of rows) {
    const e = out.get(r.container_id)!;
    e.last = r.status;
    if (r.status !== 'blocked') e.former = r.status;
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
 * inside the caller's transaction, AFTER the hold's own row was written: at the start the
 * container becomes blocked; at the end it returns to its status before the block, unless
 * another hold still keeps it.
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
  await trx('container_status').insert({
    container_id: r.containerId,
    status: rec.former,
    reason: r.reason,
    signature_id: r.signatureId ?? null,
    changed_by: r.userId,
    changed_at: new Date(),
  });
}

export async function statusHistory(db: Db, lotId: number): Promise<ContainerStatusRecord[]> {
  const rows = await db('container_status as s')
    .join('container as c', 'c.id', 's.container_id')
    .leftJoin('app_user as u', 'u.id', 's.changed_by')
    .where('c.lot_id', lotId)
    .orderBy('s.id')
    .select('s.*', 'c.label', 'u.full_name as u_name');
  return rows.map((r) => ({
    id: r.id,
    containerId: r.container_id,
    label: r.label,
    status: r.status,
    reason: r.reason,
    changedBy: r.changed_by ? { id: r.changed_by, name: r.u_name } : null,
    changedAt: new Date(r.changed_at).toISOString(),
  }));
}

/**
 * Moves containers to `status` inside the caller's transaction; refuses (409) a change the life
 * cycle does not allow (e.g. a released container back to sampled). Containers already in the
 * status are left as they are.
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
  },
): Promise<number[]> {
  const current = await transitionFrom(trx, r.lotId);
  const now = new Date();
  const rows = [];
  for (const id of r.containerIds) {
    const from = current.get(id);
    if (from === undefined) throw conflict(`Container ${id} is not a container of this lot.`);
    if (from === r.status) continue;
    if (!ALLOWED[from].includes(r.status) && r.onlyWhereAllowed) continue;
    if (!ALLOWED[from].includes(r.status))
      throw conflict(`A container that is ${from} cannot become ${r.status}.`, { containerId: id, from, to: r.status });
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
  return rows.map((x) => x.container_id);
}
