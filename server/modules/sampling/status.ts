/**
 * Container status (issue 14 item 4): each container moves quarantine -> sampled -> released or
 * rejected, and is blocked while something holds it (an open investigation, too many invalid
 * measurements). One append-only row per change (container_status, the label printed from it); a
 * container without rows (stored before migration 142) is in quarantine. The transitions, the
 * writer and the one place that decides the current status with its holds (currentStatuses,
 * holdsOf, recordHoldChange) are in the lot and container state machine
 * (server/modules/lots/state.ts); this file reads the history.
 */
import type { Db } from '../../lib/db';
import type { AppUserRow, ContainerRow, ContainerStatusRow } from '../../lib/db-tables';
import { oneOf } from '../../lib/db';
import { CONTAINER_STATUSES, type ContainerStatusRecord } from './contract';

export async function statusHistory(db: Db, lotId: number): Promise<ContainerStatusRecord[]> {
  const rows = await db('container_status as s')
    .join('container as c', 'c.id', 's.container_id')
    .leftJoin('app_user as u', 'u.id', 's.changed_by')
    .where('c.lot_id', lotId)
    .orderBy('s.id')
    .select<(ContainerStatusRow & Pick<ContainerRow, 'label'> & { u_name: AppUserRow['full_name'] | null })[]>(
      's.*',
      'c.label',
      'u.full_name as u_name',
    );
  return rows.map((r) => ({
    id: r.id,
    containerId: r.container_id,
    label: r.label,
    status: oneOf(CONTAINER_STATUSES, r.status, `container ${r.container_id} status`),
    reason: r.reason,
    changedBy: r.changed_by ? { id: r.changed_by, name: r.u_name ?? '' } : null,
    changedAt: new Date(r.changed_at).toISOString(),
  }));
}
