/**
 * Identity testing of every container (EU GMP Annex 8 para 2; 21 CFR 211.84(d)(1)):
 * starting an attempt on a usable instrument, matching files to containers, and recording
 * measurements. Each upload keeps the raw bytes and their SHA-256, is scored at once by the
 * engine against the grade's approved reference set under the approved method version, and
 * becomes an insert-only measurement row. Re-measuring adds a row; nothing is overwritten.
 *
 * Retest rule (FDA OOS guidance: no "testing into compliance"): a container whose latest
 * result in the attempt is a FAIL cannot be measured again in that attempt; the only way to
 * a new result is QA invalidating it in an investigation and authorising a retest attempt.
 */
import { transactionWithRetry } from '../../lib/retry';
import { must } from '../../lib/db';
import { childLog, safeError } from '../../lib/log';
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import { storeFile } from '../../lib/files';
import { AppError, badRequest, conflict, notFound, spectrumRefusal, unprocessable } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import type { Spectrum } from '../../spectra';
import { measureOff } from '../../workers/pool';
import { enqueueMailToRole } from '../../lib/mail';
import { copyRefusal, findCopy, lockAndRecheck, recordFingerprint } from '../provenance';
import {
  assertHolder,
  blockedRefusal,
  blockState,
  identifierFindings,
  identifierRefusal,
  judgeAcquisition,
} from '../provenance';
import { getApprovedReferenceSet, getPinnedReferenceSet, searchApprovedLibrary } from '../library';
import { assertIrSuitable } from '../library';
import * as lots from '../lots';
import { loadContext } from './context';
import { fitsMethod, instrumentStatus } from './instrument-status';
import { inScope, labelsInFileName, latestByContainer } from './outcome';
import * as repo from './repo';
import { FOLDER_WATCHER, intakeSettingOf, lockUnassigned, recordFolderEvent } from '../../lib/intake-records';
import type { HintEntry, MatchRow, MeasurementSummary, StartedTest, StoredResult, UploadResult } from './contract';

const STARTABLE = new Set(['awaiting-testing', 'testing', 'retest-authorised']);

async function usableInstrument(db: Knex | Knex.Transaction, instrumentId: number, methodTechnique: string) {
  const s = await instrumentStatus(db, instrumentId);
  if (!s) throw notFound('The instrument');
  if (!s.usable) throw new AppError(409, 'INSTRUMENT_CHECK_DUE', s.reason!, { instrumentId, check: s.check });
  if (!fitsMethod(s.instrument, methodTechnique))
    throw new AppError(
      422,
      'INSTRUMENT_UNSUITABLE',
      `Instrument ${s.instrument.name} (${s.instrument.technique}, ${s.instrument.sampling}) does not fit the identity method (${methodTechnique}). Choose a suitable instrument.`,
    );
  return s;
}

async function approvedSetFor(materialId: number, db: Knex) {
  const set = await getApprovedReferenceSet(materialId, db);
  if (!set)
    throw new AppError(
      409,
      'NO_APPROVED_METHOD',
      'This material has no approved identity method. QA must approve one before testing.',
    );
  if (set.references.length === 0)
    throw new AppError(
      409,
      'NO_APPROVED_REFERENCE',
      'This material has no approved reference spectrum. QA must approve one before testing.',
    );
  return set;
}

/** Starts the next test attempt of a lot on an instrument with a valid instrument check. */
export async function startTest(
  db: Knex,
  user: AuthUser,
  lotId: number,
  instrumentId: number,
  ip: string | null,
): Promise<StartedTest> {
  const lot = await lots.findLot(db, lotId);
  if (!lot) throw notFound('The lot');
  await assertIrSuitable(db, lot.material.id, `Lot ${lot.lotNumber} cannot be put into IR testing`);
  const set = await approvedSetFor(lot.material.id, db);
  await usableInstrument(db, instrumentId, set.method.technique);
  const actor = { id: user.id, name: user.fullName };
  return transactionWithRetry(db, async (trx) => {
    const row = await lots.lockLot(trx, lotId);
    if (!row) throw notFound('The lot');
    if (row.status !== 'quarantine') throw conflict(`Lot ${row.lot_number} is ${row.status}; it cannot be tested.`);
    if (!STARTABLE.has(row.identity_status)) {
      const why =
        row.identity_status === 'failed'
          ? 'Its identity test failed and an investigation is open: a retest needs QA authorisation.'
          : row.identity_status === 'passed'
            ? 'Its identity has already passed.'
            : `Its identity status is "${row.identity_status}".`;
      throw conflict(`A new test attempt cannot be started for lot ${row.lot_number}. ${why}`);
    }
    if (row.sampling_plan && !(await trx('sampling_record').where({ lot_id: lotId }).first('id')))
      throw conflict(
        `Lot ${row.lot_number} has not been sampled yet. Sampling precedes testing: clear the sampling booth, sample the containers and sign the sampling record first.`,
      );
    const tests = await repo.testsOfLot(trx, lotId);
    const open = tests.find((t) => t.status === 'in-progress' || t.status === 'awaiting-verification');
    if (open)
      throw conflict(
        `Attempt ${open.attempt} of lot ${row.lot_number} is ${open.status === 'in-progress' ? 'still in progress' : 'awaiting verification'}.`,
        { testId: open.id },
      );
    let retestOf: number | null = null;
    if (row.identity_status === 'retest-authorised') {
      const inv = await trx('investigation')
        .where({ lot_id: lotId, status: 'retest-authorised' })
        .orderBy('id', 'desc')
        .first();
      if (!inv) throw conflict('No retest authorisation was found for this lot.');
      if (tests.some((t) => t.retest_of_investigation_id === inv.id && t.status !== 'returned'))
        throw conflict(`The retest authorised by investigation ${inv.number} has already been performed.`);
      retestOf = inv.id;
    }
    const now = new Date();
    const attempt = (tests.at(-1)?.attempt ?? 0) + 1;
    const id = await repo.insertTest(trx, {
      lot_id: lotId,
      attempt,
      status: 'in-progress',
      method_id: set.method.id,
      instrument_id: instrumentId,
      performed_by: null,
      performed_signature_id: null,
      verified_by: null,
      verified_signature_id: null,
      returned_reason: null,
      returned_signature_id: null,
      retest_of_investigation_id: retestOf,
      created_by: user.id,
      created_at: now,
      updated_at: now,
    });
    // The attempt keeps this method version and reference set to its end (docs/methods.md).
    await trx('attempt_pin').insert({
      test_id: id,
      method_id: set.method.id,
      reference_ids: JSON.stringify(set.references.map((r) => r.id)),
      created_at: now,
    });
    await appendAudit(trx, {
      actor,
      action: 'test.started',
      entityType: 'identity_test',
      entityId: id,
      after: {
        lotId,
        lotNumber: row.lot_number,
        attempt,
        methodId: set.method.id,
        methodVersion: set.method.version,
        instrumentId,
        retestOfInvestigationId: retestOf,
      },
      ip,
    });
    await lots.moveLot(trx, {
      lotId,
      to: { identityStatus: 'testing' },
      now,
      // a new attempt on a lot already in testing (after a returned attempt) moves nothing
      audit:
        row.identity_status !== 'testing'
          ? {
              actor,
              action: 'lot.identity-status-changed',
              entityType: 'lot',
              entityId: lotId,
              before: { identityStatus: row.identity_status },
              after: { identityStatus: 'testing' },
              ip,
            }
          : { recordedBy: 'test.started' },
    });
    return { id, attempt };
  });
}

/** Changes the instrument of an attempt in progress (the new one must be usable too). */
export async function switchInstrument(
  db: Knex,
  user: AuthUser,
  testId: number,
  instrumentId: number,
  ip: string | null,
) {
  const ctx = await loadContext(db, testId);
  const method = must(
    await db('identity_method').where({ id: ctx.test.method_id }).first(),
    `identity method ${ctx.test.method_id} of test ${testId}`,
  );
  await usableInstrument(db, instrumentId, method.technique);
  await transactionWithRetry(db, async (trx) => {
    const t = await repo.lockTest(trx, testId);
    if (!t || t.status !== 'in-progress') throw conflict('Only a test in progress can change its instrument.');
    if (t.instrument_id === instrumentId) return;
    await trx('identity_test').where({ id: testId }).update({ instrument_id: instrumentId, updated_at: new Date() });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'test.instrument-changed',
      entityType: 'identity_test',
      entityId: testId,
      before: { instrumentId: t.instrument_id },
      after: { instrumentId },
      ip,
    });
  });
}

/** Multi-file upload, step 1: which file goes to which container, judged by the label in its name. Stores nothing. */
export async function matchFiles(db: Knex, testId: number, fileNames: string[]): Promise<MatchRow[]> {
  const ctx = await loadContext(db, testId);
  const byLabel = new Map(ctx.allContainers.map((c) => [c.label.toUpperCase(), c]));
  const sampled = new Set(ctx.containers.map((c) => c.id));
  const latest = latestByContainer(ctx.measurements, testId);
  const rows: MatchRow[] = fileNames.map((fileName) => {
    const labels = labelsInFileName(fileName);
    if (labels.length === 0) return { fileName, status: 'no-label', label: null, containerId: null };
    if (labels.length > 1) return { fileName, status: 'several-labels', label: labels.join(', '), containerId: null };
    const label = labels[0];
    const c = byLabel.get(label);
    if (!c)
      return {
        fileName,
        status: label.startsWith(`${ctx.lot.lotNumber}-`) ? 'unknown-label' : 'other-lot',
        label,
        containerId: null,
      };
    if (!sampled.has(c.id)) return { fileName, status: 'not-sampled', label, containerId: c.id };
    if (!inScope(ctx.scope, c.id)) return { fileName, status: 'not-in-scope', label, containerId: c.id };
    if (latest.get(c.id)?.verdict === 'fail') return { fileName, status: 'failed-needs-qa', label, containerId: c.id };
    return { fileName, status: 'matched', label, containerId: c.id };
  });
  const seen = new Map<number, number>();
  for (const r of rows)
    if (r.status === 'matched' && r.containerId) seen.set(r.containerId, (seen.get(r.containerId) ?? 0) + 1);
  for (const r of rows)
    if (r.status === 'matched' && r.containerId && (seen.get(r.containerId) ?? 0) > 1) r.status = 'duplicate';
  return rows;
}

export interface UploadedFile {
  buffer: Buffer;
  originalname: string;
  mimetype?: string;
  size: number;
}

/** "Closest approved materials: ..." over the whole approved library; advisory, never blocks a measurement. */
async function libraryHint(
  db: Knex,
  sample: Spectrum,
  method: Parameters<typeof searchApprovedLibrary>[1],
  testedMaterialId: number,
) {
  try {
    const hits = await searchApprovedLibrary(sample, method, 20, db);
    const best = new Map<number, HintEntry>();
    for (const h of hits) {
      if (best.has(h.materialId)) continue;
      best.set(h.materialId, {
        materialId: h.materialId,
        materialCode: h.materialCode,
        materialName: h.materialName,
        referenceCode: h.referenceCode,
        score: Math.round(h.score * 10000) / 10000,
        isTestedMaterial: h.materialId === testedMaterialId,
      });
    }
    const hint = [...best.values()].slice(0, 3);
    const text = hint.length
      ? `Closest approved materials: ${hint.map((h) => `${h.materialName} (${h.materialCode}, correlation coefficient (r) ${h.score.toFixed(3)}${h.isTestedMaterial ? ', the tested material' : ''})`).join('; ')}.`
      : 'Closest approved materials: none found in the approved library for this technique.';
    return { hint, text };
  } catch (e) {
    childLog('testing').error({ err: safeError(e) }, 'library search for the mix-up hint failed');
    return { hint: null, text: 'Closest approved materials: the library search was not available.' };
  }
}

/** Records one measurement of one container. A file that cannot be read stores nothing (422). */
/** Site settings of the provenance rules (server/lib/config.ts; docs/provenance.md). */
export interface ProvenanceSettings {
  /** invalid measurements on one container after which it is blocked until QA decides */
  maxInvalidMeasurements: number;
  /** a file naming another record: the operator confirms it, or the site refuses it */
  fileIdentifierPolicy: 'confirm' | 'refuse';
  siteTimeZone: string;
  /** clock tolerance in minutes (CLOCK_TOLERANCE_MINUTES): "in the future" and the clock-offset warning */
  clockToleranceMinutes?: number;
}

export const DEFAULT_PROVENANCE: ProvenanceSettings = {
  maxInvalidMeasurements: 3,
  fileIdentifierPolicy: 'confirm',
  siteTimeZone: 'Europe/Berlin',
  clockToleranceMinutes: 5,
};

/**
 * Where a measurement's file came from when it was not a manual upload: an acquisition received
 * from the instrument's export folder (docs/instrument-intake.md). Its bytes are already stored;
 * the measurement uses that stored file, and the acquisition's event ('attached' by the watcher,
 * 'assigned' by an operator) is written in the measurement's transaction.
 */
export interface FolderSource {
  kind: 'export-folder';
  acquisitionId: number;
  fileId: number;
  event: 'attached' | 'assigned';
  /** the operator who assigned it; null when the watcher attached it */
  by: number | null;
}

export async function addMeasurement(
  db: Knex,
  user: AuthUser,
  testId: number,
  target: { containerId?: number; label?: string; reason?: string; confirmIdentifiers?: boolean },
  file: UploadedFile | undefined,
  ip: string | null,
  settings: ProvenanceSettings = DEFAULT_PROVENANCE,
  source?: FolderSource,
): Promise<UploadResult> {
  if (!file || !file.buffer) throw badRequest('Attach the spectrum file (field "file").');
  const ctx = await loadContext(db, testId);
  if (ctx.test.status !== 'in-progress')
    throw conflict(
      `Attempt ${ctx.test.attempt} of lot ${ctx.lot.lotNumber} is ${ctx.test.status}; measurements can only be added while it is in progress.`,
    );
  const container = target.containerId
    ? ctx.allContainers.find((c) => c.id === target.containerId)
    : ctx.allContainers.find((c) => c.label.toUpperCase() === (target.label ?? '').trim().toUpperCase());
  if (container && !ctx.containers.some((c) => c.id === container.id))
    throw unprocessable(
      'CONTAINER_NOT_SAMPLED',
      `Container ${container.label} was not sampled (see the sampling record of lot ${ctx.lot.lotNumber}), so it cannot be measured. Sampling precedes testing.`,
    );
  if (!container) {
    const other = target.label ? await lots.findContainerByLabel(db, target.label.trim().toUpperCase()) : undefined;
    throw unprocessable(
      'UNKNOWN_CONTAINER',
      other
        ? `Label ${target.label} belongs to another lot, not to ${ctx.lot.lotNumber}.`
        : `No container of lot ${ctx.lot.lotNumber} has this ${target.label ? `label (${target.label})` : 'id'}.`,
    );
  }
  if (!inScope(ctx.scope, container.id))
    throw unprocessable(
      'NOT_IN_SCOPE',
      `Container ${container.label} is not part of this retest: QA authorised only the containers named in the investigation.`,
    );
  assertNotFailed(ctx.measurements, testId, container);
  if (!ctx.test.instrument_id) throw conflict('Choose an instrument for this test first.');
  const intake = await intakeSettingOf(db, ctx.test.instrument_id, settings.siteTimeZone);
  if (!source && !intake.manualUploadAllowed)
    throw new AppError(
      409,
      'MANUAL_UPLOAD_OFF',
      `Manual upload is switched off for this instrument: its spectra arrive from its export folder only. Measure the container; the file is taken from the folder (or assign it from the instrument's unassigned acquisitions). Nothing was stored.`,
    );
  await assertHolder(db, ctx.test, user.id);
  if ((await blockState(db, container.id)).blocked)
    throw blockedRefusal(container.label, settings.maxInvalidMeasurements);
  const previous = latestByContainer(ctx.measurements, testId).get(container.id);
  const reason = target.reason?.trim() || null;
  if (previous?.verdict === 'pass' && !reason)
    throw unprocessable(
      'REMEASURE_REASON_REQUIRED',
      `Container ${container.label} already has a valid result in this attempt (pass, measurement ${previous.id}). A re-measurement needs a reason, which is kept with it and shown to the verifier. Nothing was stored.`,
    );

  const set = (await getPinnedReferenceSet(testId, db)) ?? (await approvedSetFor(ctx.lot.material.id, db));
  const instrument = await usableInstrument(db, ctx.test.instrument_id, set.method.technique);

  // Reading and scoring run in the compute pool: a big file never holds the event loop.
  let run: Awaited<ReturnType<typeof measureOff>>;
  try {
    run = await measureOff(
      file,
      set.references.map((r) => r.prepared),
      set.method.params,
    );
  } catch (e) {
    throw spectrumRefusal(e, file.originalname);
  }
  const { result, meta, sha256: sha } = run;
  // Provenance before anything is judged or stored: a copy, a contradicting acquisition, a file
  // that names another record (docs/provenance.md).
  const copy = await findCopy(db, sha, run.spectrum, run.keys);
  if (copy) throw copyRefusal(copy, `the measurement of container ${container.label}`);
  const acquisition = judgeAcquisition(meta.stated, {
    checkAt: new Date(instrument.check!.performedAt),
    now: new Date(),
    // a time without a zone is read in the instrument clock's zone (its intake settings), else the site's
    timeZone: intake.timeZone,
    instrument: { name: instrument.instrument.name, serial_number: instrument.instrument.serialNumber ?? null },
    futureToleranceMs: (settings.clockToleranceMinutes ?? 5) * 60_000,
  });
  const findings = await identifierFindings(db, [meta.title, meta.stated?.sampleText], {
    label: container.label,
    lotNumber: ctx.lot.lotNumber,
    materialCode: ctx.lot.material.code,
  });
  if (findings.length && (settings.fileIdentifierPolicy === 'refuse' || !target.confirmIdentifiers))
    throw identifierRefusal(findings, container, settings.fileIdentifierPolicy);
  const hint =
    result.verdict === 'fail' && run.spectrum
      ? await libraryHint(db, run.spectrum, set.method.params, ctx.lot.material.id)
      : null;
  const stored: StoredResult = {
    ...result,
    libraryHint: hint?.hint ?? null,
    libraryHintText: hint?.text ?? null,
    sampleMeta: {
      title: meta.title,
      format: meta.format,
      originalXUnits: meta.originalXUnits,
      originalYUnits: meta.originalYUnits,
      points: meta.points,
      warnings: meta.warnings,
    },
  };
  const best = result.references.find((r) => r.referenceId === result.bestReferenceId);
  const score = best ? best.correlation : null;

  const id = await transactionWithRetry(db, async (trx) => {
    // Locking the test serialises uploads of one attempt (kept in order) and signing against uploads.
    const t = await repo.lockTest(trx, testId);
    if (!t || t.status !== 'in-progress') throw conflict('The test is no longer in progress; nothing was stored.');
    const inTest = await repo.measurementsOfTest(trx, testId);
    assertNotFailed(inTest, testId, container);
    if (latestByContainer(inTest, testId).get(container.id)?.verdict === 'pass' && !reason)
      throw unprocessable(
        'REMEASURE_REASON_REQUIRED',
        `Container ${container.label} already has a valid result in this attempt. A re-measurement needs a reason. Nothing was stored.`,
      );
    await lockAndRecheck(trx, sha, run.keys);
    await trx('container').where({ id: container.id }).forUpdate().first('id');
    if ((await blockState(trx, container.id)).blocked)
      throw blockedRefusal(container.label, settings.maxInvalidMeasurements);
    if (source) await lockUnassigned(trx, source.acquisitionId, source.event);
    const now = new Date();
    const { id: fileId } = source ? { id: source.fileId } : await storeFile(trx, file, user.id, now, sha);
    const mid = await repo.insertMeasurement(trx, {
      test_id: testId,
      container_id: container.id,
      file_id: fileId,
      instrument_id: instrument.instrument.id,
      instrument_check_id: instrument.check!.id,
      method_id: set.method.id,
      reference_ids: JSON.stringify(set.references.map((r) => r.id)),
      verdict: result.verdict,
      match_score: score,
      result: JSON.stringify(stored),
      engine_version: result.engineVersion,
      authorised_by_investigation_id: t.retest_of_investigation_id,
      created_by: user.id,
      created_at: now,
    });
    await recordFingerprint(trx, {
      fileId,
      recordType: 'measurement',
      recordId: mid,
      sha256: sha,
      keys: run.keys,
      at: now,
    });
    const previousInTest = latestByContainer(inTest, testId).get(container.id) ?? null;
    await trx('measurement_provenance').insert({
      measurement_id: mid,
      acquired_text: acquisition.acquiredText?.slice(0, 120) ?? null,
      acquired_at: acquisition.acquiredAt,
      acquired_judgement: acquisition.acquiredJudgement,
      instrument_text: acquisition.instrumentText,
      stated_serial: acquisition.statedSerial,
      serial_judgement: acquisition.serialJudgement,
      title: meta.title?.slice(0, 300) || null,
      sample_text: meta.stated?.sampleText ?? null,
      identifier_findings: JSON.stringify(findings),
      identifiers_confirmed: findings.length > 0,
      remeasure_reason: reason,
      remeasure_of_measurement_id: previousInTest?.id ?? null,
      created_at: now,
    });
    // Each measurement records the method version it was scored under. A pinned attempt keeps its
    // version; only an attempt started before pins existed follows a new version (audited).
    await trx('identity_test').where({ id: testId }).update({ updated_at: now, method_id: set.method.id });
    if (t.method_id !== set.method.id)
      await appendAudit(trx, {
        actor: { id: user.id, name: user.fullName },
        action: 'test.method-version-changed',
        entityType: 'identity_test',
        entityId: testId,
        before: { methodId: t.method_id },
        after: { methodId: set.method.id, methodVersion: set.method.version },
        reason: 'QA approved a new identity method version while the attempt was in progress.',
        ip,
      });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'measurement.recorded',
      entityType: 'measurement',
      entityId: mid,
      after: {
        testId,
        lotNumber: ctx.lot.lotNumber,
        container: container.label,
        file: { name: file.originalname, sha256: sha, size: file.buffer.length },
        instrumentId: instrument.instrument.id,
        instrumentCheckId: instrument.check!.id,
        methodId: set.method.id,
        referenceIds: set.references.map((r) => r.id),
        verdict: result.verdict,
        matchScore: score,
        engineVersion: result.engineVersion,
        remeasureOf: previousInTest?.id ?? null,
        acquisition: {
          stated: acquisition.acquiredText,
          judgement: acquisition.acquiredJudgement,
          instrument: acquisition.instrumentText,
          serial: acquisition.statedSerial,
          serialJudgement: acquisition.serialJudgement,
        },
        identifiersConfirmed: findings.length ? findings.map((f) => f.text) : null,
        source: source
          ? { kind: source.kind, acquisitionId: source.acquisitionId, event: source.event }
          : { kind: 'manual-upload' },
      },
      reason: reason ?? undefined,
      ip,
    });
    if (source)
      await recordFolderEvent(trx, {
        acquisitionId: source.acquisitionId,
        event: source.event,
        measurementId: mid,
        testId,
        containerId: container.id,
        by: source.by,
        actorName: source.by ? user.fullName : FOLDER_WATCHER,
        reason: reason,
        ip,
      });
    if (result.verdict === 'invalid') {
      const state = await blockState(trx, container.id);
      if (state.invalidSince >= settings.maxInvalidMeasurements) {
        await trx('container_block').insert({
          container_id: container.id,
          test_id: testId,
          event: 'blocked',
          invalid_count: state.invalidSince,
          reason: null,
          signature_id: null,
          created_by: user.id,
          created_at: now,
        });
        await appendAudit(trx, {
          actor: { id: user.id, name: user.fullName },
          action: 'container.blocked',
          entityType: 'container',
          entityId: container.id,
          after: {
            label: container.label,
            lotNumber: ctx.lot.lotNumber,
            testId,
            invalidMeasurements: state.invalidSince,
          },
          reason: `${state.invalidSince} invalid measurements (site limit ${settings.maxInvalidMeasurements}).`,
          ip,
        });
        // the container's status shows the block (server/modules/lots/state.ts decides it)
        await lots.recordHoldChange(trx, {
          lotId: ctx.lot.id,
          containerId: container.id,
          held: true,
          reason: `Blocked after ${state.invalidSince} invalid measurements until QA releases it`,
          userId: user.id,
        });
        await enqueueMailToRole(
          trx,
          'qa_manager',
          `Drumline: container ${container.label} blocked after ${state.invalidSince} invalid measurements`,
          `Container ${container.label} of lot ${ctx.lot.lotNumber} (${ctx.lot.material.code}) had ${state.invalidSince} invalid measurements in a row ` +
            `(the quality gate refused a verdict each time). It is blocked: no further measurement can be added until a QA manager decides how to go on ` +
            `(work queue, "Blocked containers").`,
        );
      }
    }
    return mid;
  });
  return {
    id,
    containerId: container.id,
    label: container.label,
    verdict: result.verdict,
    matchScore: score,
    result: stored,
  };
}

function assertNotFailed(
  measurements: MeasurementSummary[],
  testId: number,
  container: { id: number; label: string },
): void {
  if (latestByContainer(measurements, testId).get(container.id)?.verdict === 'fail')
    throw new AppError(
      409,
      'RETEST_NEEDS_QA',
      `Container ${container.label} failed in this attempt. It cannot be measured again here: sign the test performed; after verification an investigation opens, and only QA can authorise a retest.`,
    );
}
