/**
 * Export-folder intake (docs/instrument-intake.md): per instrument an export folder and whether
 * manual upload is allowed; every file that arrives in the folder is kept (folder_acquisition,
 * append-only, its bytes in stored_file with their SHA-256) and, when its label names a container
 * whose open test runs on this instrument, becomes that container's measurement through the same
 * service path as a manual upload (testing/service.ts addMeasurement: every provenance rule
 * applies). Anything else is left unassigned for an operator to assign (confirmed, audited) or
 * to mark as not a sample with a reason. QA's reconciliation lists what stays unassigned too long
 * and, per test, every acquisition on its instrument during the test window.
 */
import fs from 'node:fs';
import path from 'node:path';
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import type { AppConfig } from '../../lib/config';
import { AppError, conflict, notFound, unprocessable } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { storeFile } from '../../lib/files';
import { transactionWithRetry } from '../../lib/retry';
import { childLog, safeError } from '../../lib/log';
import { oneOf, parseJson } from '../../lib/db';
import type {
  FolderAcquisitionEventRow,
  FolderAcquisitionRow,
  IdentityTestRow,
  InstrumentIntakeSettingRow,
  MeasurementRow,
} from '../../lib/db-tables';
import type { Role } from '../../lib/contract';
import { readSpectrumOff, sha256Off } from '../../workers/pool';
import { holderOf, zonedToUtc } from '../provenance';
import { addMeasurement, latestByContainer, measurementsOfTest, type ProvenanceSettings } from '../testing';
import { labelsOfFile } from './labels';
import type {
  AcquisitionEntry,
  AssignAcquisitionInput,
  IntakeSetting,
  IntakeSettingInput,
  IntakeSettingView,
  NotASampleInput,
  OverdueAcquisitions,
  TestAcquisitionsView,
} from './contract';
import { ACQUISITION_STATES, type AcquisitionState } from './contract';
import { FOLDER_WATCHER, intakeSettingOf, lockUnassigned, recordFolderEvent } from '../../lib/intake-records';
import { clockOffsetSeconds, clockWarning } from '../../lib/clock-offset';

/** The state an acquisition event records (checked: the schema keeps it a VARCHAR). */
function acquisitionStateOf(v: string): AcquisitionState {
  return oneOf(ACQUISITION_STATES, v, 'acquisition event');
}

const log = childLog('intake');

export function provenanceSettings(config: AppConfig): ProvenanceSettings {
  return {
    maxInvalidMeasurements: config.maxInvalidMeasurements,
    fileIdentifierPolicy: config.fileIdentifierPolicy,
    siteTimeZone: config.siteTimeZone,
    clockToleranceMinutes: config.clockToleranceMinutes,
  };
}

// ---- settings

/** The export root as an absolute path (created when missing). */
export function exportRoot(config: AppConfig): string {
  const root = path.resolve(config.instrumentExportRoot);
  fs.mkdirSync(root, { recursive: true });
  return root;
}

/**
 * The absolute folder of a stored folder name: always inside the export root (no absolute path,
 * no "..", no symbolic link out of it), so a settings change cannot make the server read any
 * other folder of the machine.
 */
export function resolveExportFolder(config: AppConfig, folder: string): string {
  const root = fs.realpathSync(exportRoot(config));
  const bad = () =>
    unprocessable(
      'EXPORT_FOLDER_OUTSIDE_ROOT',
      `The export folder must be a folder inside the site's export root (${path.basename(root)}/...), named relative to it, e.g. "ftir-2". Mount a share inside the root to watch it. Nothing was stored.`,
    );
  if (path.isAbsolute(folder) || folder.split(/[\\/]/).includes('..')) throw bad();
  const abs = path.resolve(root, folder);
  if (abs === root || !abs.startsWith(root + path.sep)) throw bad();
  fs.mkdirSync(abs, { recursive: true });
  const real = fs.realpathSync(abs);
  if (!real.startsWith(root + path.sep)) throw bad();
  return real;
}

function validZone(zone: string): boolean {
  try {
    new Intl.DateTimeFormat('en-GB', { timeZone: zone });
    return true;
  } catch {
    return false;
  }
}

function settingRow(r: InstrumentIntakeSettingRow, names: Map<number, string>): IntakeSetting {
  return {
    instrumentId: r.instrument_id,
    exportFolder: r.export_folder,
    usePolling: !!r.use_polling,
    manualUploadAllowed: !!r.manual_upload_allowed,
    timeZone: r.time_zone,
    setBy: names.get(r.set_by) ?? null,
    setAt: new Date(r.created_at).toISOString(),
    reason: r.reason,
  };
}

export async function getIntakeSetting(db: Knex, config: AppConfig, instrumentId: number): Promise<IntakeSettingView> {
  const inst = await db('instrument').where({ id: instrumentId }).first('id');
  if (!inst) throw notFound('The instrument');
  const rows = await db('instrument_intake_setting as s')
    .join('app_user as u', 'u.id', 's.set_by')
    .where('s.instrument_id', instrumentId)
    .orderBy('s.id', 'desc')
    .select<(InstrumentIntakeSettingRow & { full_name: string })[]>('s.*', 'u.full_name');
  const names = new Map(rows.map((r) => [r.set_by, r.full_name]));
  const history = rows.map((r) => settingRow(r, names));
  const current: IntakeSetting = history[0] ?? {
    instrumentId,
    exportFolder: null,
    usePolling: false,
    manualUploadAllowed: true,
    timeZone: config.siteTimeZone,
    setBy: null,
    setAt: null,
    reason: null,
  };
  return { current, history, exportRoot: path.basename(path.resolve(config.instrumentExportRoot)) };
}

/** QA (or the administrator) sets an instrument's intake settings: a new row, audited. */
export async function setIntakeSetting(
  db: Knex,
  config: AppConfig,
  user: AuthUser,
  instrumentId: number,
  input: IntakeSettingInput,
  ip: string | null,
): Promise<IntakeSettingView> {
  const inst = await db('instrument').where({ id: instrumentId }).first('id', 'name');
  if (!inst) throw notFound('The instrument');
  if (!validZone(input.timeZone))
    throw unprocessable(
      'UNKNOWN_TIME_ZONE',
      `"${input.timeZone}" is not a time zone name (use an IANA name such as Europe/Berlin). Nothing was stored.`,
    );
  const folder = input.exportFolder?.trim() || null;
  if (folder) resolveExportFolder(config, folder);
  if (folder) {
    const others = await db('instrument_intake_setting as s')
      .whereIn('s.id', db('instrument_intake_setting').max('id').groupBy('instrument_id'))
      .where('s.export_folder', folder)
      .whereNot('s.instrument_id', instrumentId)
      .first('s.instrument_id');
    if (others)
      throw new AppError(
        409,
        'EXPORT_FOLDER_IN_USE',
        `Folder "${folder}" is already the export folder of another instrument: a file could not be told apart. Nothing was stored.`,
      );
  }
  if (!folder && !input.manualUploadAllowed)
    throw unprocessable(
      'NO_WAY_IN',
      'An instrument without an export folder needs manual upload: otherwise no spectrum can reach its tests. Nothing was stored.',
    );
  await transactionWithRetry(db, async (trx) => {
    const before = await intakeSettingOf(trx, instrumentId, config.siteTimeZone);
    const now = new Date();
    const [id] = await trx('instrument_intake_setting').insert({
      instrument_id: instrumentId,
      export_folder: folder,
      use_polling: input.usePolling,
      manual_upload_allowed: input.manualUploadAllowed,
      time_zone: input.timeZone,
      reason: input.reason,
      set_by: user.id,
      created_at: now,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'instrument.intake-changed',
      entityType: 'instrument',
      entityId: instrumentId,
      before: {
        exportFolder: before.exportFolder,
        usePolling: before.usePolling,
        manualUploadAllowed: before.manualUploadAllowed,
        timeZone: before.timeZone,
      },
      after: {
        settingId: id,
        exportFolder: folder,
        usePolling: input.usePolling,
        manualUploadAllowed: input.manualUploadAllowed,
        timeZone: input.timeZone,
      },
      reason: input.reason,
      ip,
    });
  });
  return getIntakeSetting(db, config, instrumentId);
}

// ---- a file arrives

async function asOperator(db: Knex, userId: number): Promise<AuthUser> {
  const u = await db('app_user').where({ id: userId }).first('id', 'username', 'full_name', 'email', 'roles');
  if (!u) throw new Error(`user ${userId} holding the test is missing`);
  return {
    id: u.id,
    username: u.username,
    fullName: u.full_name,
    email: u.email ?? '',
    roles: parseJson<Role[]>(u.roles, []),
    mustChangePassword: false,
    sessionId: '',
    signedOnce: false,
  };
}

async function leaveUnassigned(db: Knex, acquisitionId: number, code: string, reason: string) {
  await transactionWithRetry(db, async (trx) => {
    await lockUnassigned(trx, acquisitionId, 'unassigned');
    await recordFolderEvent(trx, {
      acquisitionId,
      event: 'unassigned',
      code,
      reason,
      by: null,
      actorName: FOLDER_WATCHER,
    });
  });
}

export interface IngestOutcome {
  acquisitionId: number | null;
  state: 'taken-before' | 'attached' | 'unassigned';
  code?: string;
}

/**
 * Takes one file that arrived in an instrument's export folder (once per path and content): keeps
 * it, reads what it states, and attaches it to its container's open test on this instrument, or
 * leaves it unassigned with the reason.
 */
export async function ingestFile(
  db: Knex,
  config: AppConfig,
  instrumentId: number,
  absPath: string,
  relativePath: string,
): Promise<IngestOutcome> {
  const bytes = await fs.promises.readFile(absPath);
  const stat = await fs.promises.stat(absPath).catch(() => null);
  const sha = await sha256Off(new Uint8Array(bytes));
  const rel = relativePath.split(path.sep).join('/').slice(0, 500);
  const seen = await db('folder_acquisition')
    .where({ instrument_id: instrumentId, relative_path: rel, sha256: sha })
    .first('id');
  if (seen) return { acquisitionId: seen.id, state: 'taken-before' };
  const setting = await intakeSettingOf(db, instrumentId, config.siteTimeZone);
  const fileName = path.basename(rel);
  let title: string | null = null;
  let sample: string | null = null;
  let acquiredText: string | null = null;
  let acquiredAt: Date | null = null;
  let readError: string | null = null;
  try {
    const s = await readSpectrumOff(new Uint8Array(bytes), fileName);
    title = s.meta.title ?? null;
    const stated = s.meta.stated;
    sample = stated?.sampleText ?? null;
    acquiredText = stated?.whenText ?? null;
    if (stated?.whenLocal && stated.hasTime)
      acquiredAt =
        stated.utcOffsetMinutes !== null
          ? new Date(new Date(`${stated.whenLocal}Z`).getTime() - stated.utcOffsetMinutes * 60_000)
          : zonedToUtc(stated.whenLocal, setting.timeZone);
  } catch (e) {
    readError = String((e as Error)?.message ?? e).slice(0, 500);
  }
  const labels = labelsOfFile(fileName, title, sample);
  const receivedAt = new Date();
  let acquisitionId: number;
  try {
    acquisitionId = await transactionWithRetry(db, async (trx) => {
      const { id: fileId } = await storeFile(trx, { originalname: fileName, buffer: bytes }, null, receivedAt, sha);
      const [id] = await trx('folder_acquisition').insert({
        instrument_id: instrumentId,
        relative_path: rel,
        file_id: fileId,
        sha256: sha,
        size: bytes.length,
        file_modified_at: stat ? stat.mtime : null,
        received_at: receivedAt,
        acquired_text: acquiredText?.slice(0, 120) ?? null,
        acquired_at: acquiredAt,
        acquired_zone: acquiredAt ? setting.timeZone : null,
        clock_offset_seconds: clockOffsetSeconds(acquiredAt, receivedAt),
        title: title?.slice(0, 300) ?? null,
        sample_text: sample?.slice(0, 300) ?? null,
        label_found: labels.length === 1 ? labels[0] : null,
        read_error: readError,
      });
      await appendAudit(trx, {
        actor: { id: null, name: FOLDER_WATCHER },
        action: 'acquisition.received',
        entityType: 'folder_acquisition',
        entityId: id,
        after: { instrumentId, file: { name: rel, sha256: sha, size: bytes.length }, labels, acquiredText },
      });
      return id;
    });
  } catch (e) {
    if ((e as { code?: string }).code === 'ER_DUP_ENTRY') return { acquisitionId: null, state: 'taken-before' };
    throw e;
  }
  const unassigned = async (code: string, reason: string): Promise<IngestOutcome> => {
    await leaveUnassigned(db, acquisitionId, code, reason);
    return { acquisitionId, state: 'unassigned', code };
  };
  if (readError) return unassigned('UNREADABLE', `The file could not be read as a spectrum: ${readError}`);
  if (labels.length === 0)
    return unassigned(
      'NO_LABEL',
      'Neither the file name nor the sample identifier inside the file names a container label.',
    );
  if (labels.length > 1)
    return unassigned('SEVERAL_LABELS', `The file names several container labels (${labels.join(', ')}).`);
  const label = labels[0];
  const c = await db('container').where({ label }).first('id', 'lot_id');
  if (!c) return unassigned('UNKNOWN_LABEL', `No container has the label ${label}.`);
  const test = await db('identity_test')
    .where({ lot_id: c.lot_id, status: 'in-progress' })
    .orderBy('id', 'desc')
    .first();
  if (!test) return unassigned('NO_OPEN_TEST', `Container ${label} has no test in progress.`);
  if (test.instrument_id !== instrumentId)
    return unassigned('OTHER_INSTRUMENT', `The test in progress of container ${label} runs on another instrument.`);
  const latest = latestByContainer(await measurementsOfTest(db, test.id), test.id).get(c.id);
  if (latest?.verdict === 'pass')
    return unassigned(
      'HAS_VALID_RESULT',
      `Container ${label} already has a valid result in this test (measurement ${latest.id}); a re-measurement needs a person's reason.`,
    );
  const holder = await asOperator(db, await holderOf(db, test));
  try {
    await addMeasurement(
      db,
      holder,
      test.id,
      { containerId: c.id },
      { buffer: bytes, originalname: fileName, size: bytes.length },
      null,
      provenanceSettings(config),
      { kind: 'export-folder', acquisitionId, fileId: await fileIdOf(db, acquisitionId), event: 'attached', by: null },
    );
    return { acquisitionId, state: 'attached' };
  } catch (e) {
    if (e instanceof AppError && e.status < 500) return unassigned(e.code, e.message);
    throw e;
  }
}

async function fileIdOf(db: Knex, acquisitionId: number): Promise<number> {
  const a = await db('folder_acquisition').where({ id: acquisitionId }).first('file_id');
  if (!a) throw new Error(`folder acquisition ${acquisitionId} just received is missing`);
  return a.file_id;
}

// ---- the operator decides

async function loadAcquisition(db: Knex, id: number) {
  const a = await db('folder_acquisition').where({ id }).first();
  if (!a) throw notFound('The acquisition');
  return a;
}

/** The operator assigns an unassigned acquisition to a container (confirmed, audited), through the upload path. */
export async function assignAcquisition(
  db: Knex,
  config: AppConfig,
  user: AuthUser,
  acquisitionId: number,
  input: AssignAcquisitionInput,
  ip: string | null,
) {
  const a = await loadAcquisition(db, acquisitionId);
  const state = (
    await db('folder_acquisition_event').where({ acquisition_id: a.id }).orderBy('id', 'desc').first('event')
  )?.event;
  if (state !== 'unassigned')
    throw new AppError(
      409,
      'ACQUISITION_DECIDED',
      `Acquisition ${a.relative_path} is not unassigned; it cannot be assigned. Nothing was stored.`,
    );
  const c = await db('container').where({ id: input.containerId }).first('id', 'lot_id', 'label');
  if (!c) throw notFound('The container');
  const test = await db('identity_test')
    .where({ lot_id: c.lot_id, status: 'in-progress' })
    .orderBy('id', 'desc')
    .first();
  if (!test)
    throw conflict(
      `Container ${c.label} has no test in progress; the acquisition cannot be assigned to it. Nothing was stored.`,
    );
  if (test.instrument_id !== a.instrument_id)
    throw conflict(
      `The test in progress of container ${c.label} runs on another instrument than the one this file came from. Nothing was stored.`,
    );
  const file = await db('stored_file').where({ id: a.file_id }).first('data', 'file_name');
  if (!file) throw new Error(`stored file ${a.file_id} of acquisition ${a.id} is missing`);
  const buffer = Buffer.from(file.data);
  return addMeasurement(
    db,
    user,
    test.id,
    { containerId: c.id, reason: input.reason, confirmIdentifiers: input.confirmIdentifiers },
    { buffer, originalname: file.file_name, size: buffer.length },
    ip,
    provenanceSettings(config),
    { kind: 'export-folder', acquisitionId: a.id, fileId: a.file_id, event: 'assigned', by: user.id },
  );
}

/** The operator marks an unassigned acquisition as not a sample, with a reason (audited). */
export async function markNotASample(
  db: Knex,
  user: AuthUser,
  acquisitionId: number,
  input: NotASampleInput,
  ip: string | null,
) {
  await loadAcquisition(db, acquisitionId);
  await transactionWithRetry(db, async (trx) => {
    await lockUnassigned(trx, acquisitionId, 'not-a-sample');
    await recordFolderEvent(trx, {
      acquisitionId,
      event: 'not-a-sample',
      reason: input.reason,
      by: user.id,
      actorName: user.fullName,
      ip,
    });
  });
}

// ---- lists

/** Acquisitions with their latest event, filtered by the caller. */
export async function acquisitionEntries(
  db: Knex,
  config: AppConfig,
  where: (q: Knex.QueryBuilder) => void,
): Promise<AcquisitionEntry[]> {
  const q = db('folder_acquisition as a').join('instrument as i', 'i.id', 'a.instrument_id');
  where(q);
  const rows = await q
    .select<(FolderAcquisitionRow & { instrument_name: string })[]>('a.*', 'i.name as instrument_name')
    .orderBy('a.id')
    .limit(2000);
  if (!rows.length) return [];
  const events = await db('folder_acquisition_event as e')
    .leftJoin('app_user as u', 'u.id', 'e.created_by')
    .leftJoin('container as c', 'c.id', 'e.container_id')
    .whereIn(
      'e.acquisition_id',
      rows.map((r) => r.id),
    )
    .orderBy('e.id')
    .select<(FolderAcquisitionEventRow & { full_name: string | null; label: string | null })[]>(
      'e.*',
      'u.full_name',
      'c.label',
    );
  const last = new Map<number, (typeof events)[number]>();
  for (const e of events) last.set(e.acquisition_id, e);
  return rows.map((r) => {
    const e = last.get(r.id);
    const offset = r.clock_offset_seconds === null ? null : Number(r.clock_offset_seconds);
    return {
      id: r.id,
      instrumentId: r.instrument_id,
      instrumentName: r.instrument_name,
      fileName: r.relative_path,
      sha256: r.sha256,
      size: r.size,
      receivedAt: new Date(r.received_at).toISOString(),
      acquiredText: r.acquired_text,
      acquiredAt: r.acquired_at ? new Date(r.acquired_at).toISOString() : null,
      clockOffsetSeconds: offset,
      clockWarning: clockWarning(offset, config.clockToleranceMinutes),
      labelFound: r.label_found,
      sampleText: r.sample_text,
      readError: r.read_error,
      state: e ? acquisitionStateOf(e.event) : 'received',
      stateCode: e?.code ?? null,
      stateReason: e?.reason ?? null,
      decidedBy: e ? (e.full_name ?? FOLDER_WATCHER) : null,
      decidedAt: e ? new Date(e.created_at).toISOString() : null,
      measurementId: e?.measurement_id ?? null,
      testId: e?.test_id ?? null,
      containerLabel: e?.label ?? null,
    };
  });
}

/** Ids of the acquisitions whose latest event is "unassigned" (a subquery). */
function unassignedIds(db: Knex) {
  return db('folder_acquisition_event as e')
    .whereIn('e.id', db('folder_acquisition_event').max('id').groupBy('acquisition_id'))
    .where('e.event', 'unassigned')
    .select('e.acquisition_id');
}

/** An instrument's unassigned acquisitions (oldest first, all of them), or its latest 200 of any state. */
export async function instrumentAcquisitions(
  db: Knex,
  config: AppConfig,
  instrumentId: number,
  state: 'unassigned' | 'all',
) {
  const inst = await db('instrument').where({ id: instrumentId }).first('id');
  if (!inst) throw notFound('The instrument');
  if (state === 'unassigned')
    return acquisitionEntries(db, config, (q) =>
      q.where('a.instrument_id', instrumentId).whereIn('a.id', unassignedIds(db)),
    );
  const latest = await acquisitionEntries(db, config, (q) =>
    q.where('a.instrument_id', instrumentId).whereIn('a.id', function latest200() {
      this.select('id').from(
        db('folder_acquisition')
          .where({ instrument_id: instrumentId })
          .orderBy('id', 'desc')
          .limit(200)
          .select('id')
          .as('t'),
      );
    }),
  );
  return latest.reverse();
}

/** QA's reconciliation: acquisitions left unassigned longer than the site setting. */
export async function overdueAcquisitions(db: Knex, config: AppConfig): Promise<OverdueAcquisitions> {
  const hours = config.unassignedAcquisitionHours;
  const before = new Date(Date.now() - hours * 3600_000);
  const all = await acquisitionEntries(db, config, (q) =>
    q.whereIn('a.id', unassignedIds(db)).where('a.received_at', '<', before),
  );
  return { hours, acquisitions: all };
}

/**
 * Every acquisition received from the test's instrument during the test window (from the start
 * of the attempt to its performed signature, or now), whatever became of it, and the test's
 * measurements that were uploaded by hand: a discarded acquisition cannot hide.
 */
export async function testAcquisitions(db: Knex, config: AppConfig, testId: number): Promise<TestAcquisitionsView> {
  const t = await db('identity_test as t')
    .leftJoin('e_signature as s', 's.id', 't.performed_signature_id')
    .leftJoin('instrument as i', 'i.id', 't.instrument_id')
    .where('t.id', testId)
    .first<
      | (Pick<IdentityTestRow, 'id' | 'created_at' | 'instrument_id'> & {
          signed_at: Date | null;
          name: string | null;
        })
      | undefined
    >('t.id', 't.created_at', 't.instrument_id', 's.signed_at', 'i.name');
  if (!t) throw notFound('The identity test');
  const from = new Date(t.created_at);
  const to = t.signed_at ? new Date(t.signed_at) : new Date();
  // instruments the attempt used: the one it runs on now and any one a measurement of it was made on
  const used = new Set<number>(
    (await db('measurement').where({ test_id: testId }).distinct('instrument_id')).map((r) => r.instrument_id),
  );
  if (t.instrument_id) used.add(t.instrument_id);
  const acquisitions = used.size
    ? await acquisitionEntries(db, config, (q) =>
        q
          .whereIn('a.instrument_id', [...used])
          .where((w) =>
            w
              .whereBetween('a.received_at', [from, to])
              .orWhereIn('a.id', db('folder_acquisition_event').where({ test_id: testId }).select('acquisition_id')),
          ),
      )
    : [];
  const folderMeasurements = db('folder_acquisition_event').whereNotNull('measurement_id').select('measurement_id');
  const manual = await db('measurement as m')
    .join('container as c', 'c.id', 'm.container_id')
    .join('stored_file as f', 'f.id', 'm.file_id')
    .join('app_user as u', 'u.id', 'm.created_by')
    .where('m.test_id', testId)
    .whereNotIn('m.id', folderMeasurements)
    .orderBy('m.id')
    .select<(Pick<MeasurementRow, 'id' | 'created_at'> & { label: string; file_name: string; full_name: string })[]>(
      'm.id',
      'c.label',
      'f.file_name',
      'm.created_at',
      'u.full_name',
    );
  return {
    testId,
    instrumentId: t.instrument_id ?? null,
    instrumentName: t.name ?? null,
    from: from.toISOString(),
    to: to.toISOString(),
    acquisitions,
    manualUploads: manual.map((m) => ({
      measurementId: m.id,
      label: m.label,
      fileName: m.file_name,
      uploadedAt: new Date(m.created_at).toISOString(),
      uploadedBy: m.full_name,
    })),
  };
}

export function logIngestError(instrumentId: number, rel: string, e: unknown) {
  log.error({ instrumentId, file: rel, err: safeError(e) }, 'a file of the export folder could not be taken');
}
