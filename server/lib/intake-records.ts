/**
 * Records of the export-folder intake (docs/instrument-intake.md) that other modules use inside
 * their own transactions: an instrument's current intake settings, and the events of an
 * acquisition (attached, unassigned, assigned, not a sample), each with its audit event.
 */
import type { Knex } from 'knex';
import { appendAudit } from './audit';
import type { Db } from './db';
import { AppError, notFound } from './errors';
import { ACQUISITION_STATE_LABELS, type AcquisitionState } from '../modules/intake/contract';

/** The actor name of what the folder watcher does on its own. */
export const FOLDER_WATCHER = 'export-folder watcher';

export interface IntakeSettingNow {
  id: number | null;
  exportFolder: string | null;
  usePolling: boolean;
  manualUploadAllowed: boolean;
  timeZone: string;
}

/** The latest intake settings of an instrument; without any: no folder, manual upload allowed, the site's zone. */
export async function intakeSettingOf(db: Db, instrumentId: number, siteTimeZone: string): Promise<IntakeSettingNow> {
  const r = await db('instrument_intake_setting').where({ instrument_id: instrumentId }).orderBy('id', 'desc').first();
  if (!r) return { id: null, exportFolder: null, usePolling: false, manualUploadAllowed: true, timeZone: siteTimeZone };
  return {
    id: r.id,
    exportFolder: r.export_folder ?? null,
    usePolling: !!r.use_polling,
    manualUploadAllowed: !!r.manual_upload_allowed,
    timeZone: r.time_zone,
  };
}

/** The state of an acquisition: its latest event ('received' when none was written yet). */
export async function acquisitionState(db: Db, acquisitionId: number): Promise<AcquisitionState> {
  const e = await db('folder_acquisition_event')
    .where({ acquisition_id: acquisitionId })
    .orderBy('id', 'desc')
    .first('event');
  return e && isAcquisitionState(e.event) ? e.event : 'received';
}

/** Whether a stored event names a state (recordFolderEvent writes only states). */
function isAcquisitionState(event: string): event is AcquisitionState {
  return Object.hasOwn(ACQUISITION_STATE_LABELS, event);
}

/**
 * Locks an acquisition (its row, FOR UPDATE) and checks that the event may follow: the watcher
 * attaches a file only before any decision; an operator assigns or sets aside only an unassigned one.
 */
export async function lockUnassigned(
  trx: Knex.Transaction,
  acquisitionId: number,
  next: 'attached' | 'assigned' | 'not-a-sample' | 'unassigned',
): Promise<void> {
  const a = await trx('folder_acquisition').where({ id: acquisitionId }).forUpdate().first('id', 'relative_path');
  if (!a) throw notFound('The acquisition');
  const state = await acquisitionState(trx, acquisitionId);
  const allowed = next === 'attached' || next === 'unassigned' ? state === 'received' : state === 'unassigned';
  if (!allowed)
    throw new AppError(
      409,
      'ACQUISITION_DECIDED',
      `Acquisition ${a.relative_path} is ${state === 'attached' || state === 'assigned' ? 'already a measurement' : state === 'not-a-sample' ? 'marked as not a sample' : 'not yet processed'}; it cannot be ${next === 'not-a-sample' ? 'marked as not a sample' : 'assigned'} again. Nothing was stored.`,
    );
}

/** Writes an acquisition's event and its audit event (in the caller's transaction). */
export async function recordFolderEvent(
  trx: Knex.Transaction,
  e: {
    acquisitionId: number;
    event: 'attached' | 'assigned' | 'unassigned' | 'not-a-sample';
    code?: string | null;
    reason?: string | null;
    measurementId?: number | null;
    testId?: number | null;
    containerId?: number | null;
    by: number | null;
    actorName: string;
    ip?: string | null;
  },
): Promise<number> {
  const now = new Date();
  const [id] = await trx('folder_acquisition_event').insert({
    acquisition_id: e.acquisitionId,
    event: e.event,
    code: e.code ?? null,
    reason: e.reason ?? null,
    measurement_id: e.measurementId ?? null,
    test_id: e.testId ?? null,
    container_id: e.containerId ?? null,
    created_by: e.by,
    created_at: now,
  });
  await appendAudit(trx, {
    actor: { id: e.by, name: e.actorName },
    action: `acquisition.${e.event}`,
    entityType: 'folder_acquisition',
    entityId: e.acquisitionId,
    after: {
      eventId: id,
      code: e.code ?? null,
      measurementId: e.measurementId ?? null,
      testId: e.testId ?? null,
      containerId: e.containerId ?? null,
    },
    reason: e.reason ?? null,
    ip: e.ip ?? null,
  });
  return id;
}
