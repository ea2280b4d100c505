/**
 * Container status (issue 14 item 4): each container moves quarantine -> sampled -> released or
 * rejected, and is blocked while an investigation holds it. One append-only row per change
 * (container_status); the current status is the newest row, and a container without rows (stored
 * before migration 142) is in quarantine.
 */
import type { Knex } from 'knex';
import type { Db } from '../../lib/db';
import { conflict } from '../../lib/errors';
import type { ContainerStatus, ContainerStatusRecord } from './contract';

const ALLOWED: Record<ContainerStatus, ContainerStatus[]> = {
  quarantine: ['sampled', 'released', 'rejected'],
  sampled: ['released', 'rejected', 'blocked'],
  blocked: ['sampled', 'rejected'],
  released: [],
  rejected: [],
};

/** Current status of each container of a lot (quarantine where no row exists). */
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
  const current = await currentStatuses(trx, r.lotId);
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
