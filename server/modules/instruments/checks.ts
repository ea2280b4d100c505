/**
 * Instrument checks: a spectrum judged by the engine against the instrument's approved
 * specification of the check's type (polystyrene wavenumber scale, ATR blank, noise figure, NIR
 * wavelength accuracy, NIR photometric noise), stored with its raw file, the result and the
 * performer's signature (meaning "instrument-check") in one transaction. A failing check is
 * stored as well, and opens the look-back (lookback.ts) in the same transaction.
 * valid_until = performed_at + check_validity_hours when passed, null when failed.
 * "Check due": any required check type (repo.requiredCheckTypes) without a valid check, the
 * instrument out of service, or its latest qualification record failed or past its next due date. getValidInstrumentCheck is the testing module's gate.
 */
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import { storeFile } from '../../lib/files';
import { getDb, must, type Db } from '../../lib/db';
import type { SignatureInput } from '../../lib/contract';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { conflict, notFound, spectrumRefusal, unprocessable } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import type { PerformanceCheck, PerformanceResult, PolystyreneResult } from '../../spectra';
import { instrumentCheckOff, readSpectrumOff } from '../../workers/pool';
import type { ProvenanceKeys } from '../../workers/tasks';
import { copyRefusal, findCopy, lockAndRecheck, recordFingerprint } from '../provenance';
import * as repo from './repo';
import {
  CHECK_TYPE_LABELS,
  checkTypeFits,
  isPolystyreneResult,
  type AnyCheckResult,
  type BlankLimits,
  type CheckResult,
  type CheckType,
  type InstrumentCheckState,
  type InstrumentCheckView,
  type NoiseLimits,
  type PhotometricNoiseLimits,
  type WavelengthLimits,
} from './contract';
import { openLookback } from './lookback';
import { engineSpecOf } from './specifications';
import { transactionWithRetry } from '../../lib/retry';

// Compile-time: the engine's results are what the contract calls stored check results.
const _storedResultShape = (r: PolystyreneResult): CheckResult => r;
const _anyResultShape = (r: PerformanceResult): AnyCheckResult => r;
void _storedResultShape;
void _anyResultShape;

/** One required check type of an instrument at a time, with its latest and its valid check. */
export interface CheckTypeState {
  checkType: CheckType;
  latest: repo.CheckRow | undefined;
  valid: repo.CheckRow | undefined;
}

/** Every required check type of the instrument at `at`, in order (polystyrene first). */
export async function checkStates(db: Db, inst: repo.InstrumentRow, at: Date): Promise<CheckTypeState[]> {
  const types = await repo.requiredCheckTypes(db, inst);
  const out: CheckTypeState[] = [];
  for (const t of types)
    out.push({
      checkType: t,
      latest: await repo.latestCheckOf(db, inst.id, t, at),
      valid: await repo.validCheckOf(db, inst.id, at, t),
    });
  return out;
}

/**
 * Why the instrument may not be used for testing at `at`, as the operator reads it, or null when
 * it may: in use, in service, and every required check type with a valid check.
 */
export async function unusableReason(db: Db, inst: repo.InstrumentRow, at: Date): Promise<string | null> {
  if (!inst.active) return `Instrument ${inst.name} is out of use. Choose another instrument.`;
  if (inst.service_state === 'out-of-service')
    return `Instrument ${inst.name} is out of service. Choose another instrument; QA puts it back in service.`;
  // The latest qualification record decides: a failed one, or a next due date passed, stops use.
  const q = await db('instrument_qualification')
    .where({ instrument_id: inst.id })
    .andWhere('recorded_at', '<=', at)
    .orderBy('id', 'desc')
    .first('stage', 'document_ref', 'status', 'next_due');
  if (q?.status === 'failed')
    return `The latest qualification record of ${inst.name} (${String(q.stage).toUpperCase()}, ${q.document_ref}) failed. The instrument may not be used until QA records a passing one.`;
  if (q?.next_due && new Date(q.next_due).toISOString().slice(0, 10) < at.toISOString().slice(0, 10))
    return `The requalification of ${inst.name} was due on ${new Date(q.next_due).toISOString().slice(0, 10)}. The instrument may not be used until QA records it.`;
  const states = await checkStates(db, inst, at);
  if (!states.length)
    return `Instrument ${inst.name} has no instrument check on record. Run the polystyrene wavenumber check first.`;
  const back = await repo.lastBackInService(db, inst.id, at);
  for (const s of states) {
    if (s.valid) continue;
    // The wavenumber check keeps the sentences operators know; the others name their type.
    const poly = s.checkType === 'polystyrene';
    const label = poly ? 'instrument' : CHECK_TYPE_LABELS[s.checkType];
    if (!s.latest)
      return poly
        ? `Instrument ${inst.name} has no instrument check on record. Run the polystyrene wavenumber check first.`
        : `Instrument ${inst.name} has no ${label} check on record. Run it before testing.`;
    if (s.latest.verdict !== 'pass')
      return `The last ${label} check of ${inst.name} failed. The instrument may not be used until a new check passes.`;
    if (back && new Date(s.latest.performed_at).getTime() < back.getTime())
      return `Instrument ${inst.name} came back into service after its last ${label} check. Run the check again before testing.`;
    return `The ${label} check of ${inst.name} is due (it expired ${repo.iso(s.latest.valid_until) ?? 'at once'}). Run it before testing.`;
  }
  return null;
}

export async function statusOf(db: Knex, i: repo.InstrumentRow, now: Date): Promise<InstrumentCheckState> {
  const states = await checkStates(db, i, now);
  const primary = states[0];
  const reason = await unusableReason(db, i, now);
  const valid = reason === null ? primary?.valid : undefined;
  const last = await db('instrument_check as c')
    .leftJoin('app_user as u', 'u.id', 'c.performed_by')
    .where('c.instrument_id', i.id)
    .orderBy('c.performed_at', 'desc')
    .orderBy('c.id', 'desc')
    .first<(repo.CheckRow & { full_name: string | null }) | undefined>('c.*', 'u.full_name');
  const spec = await repo.approvedSpecOf(db, i.id);
  return {
    checkDue: reason !== null,
    validCheck: valid
      ? { id: valid.id, performedAt: repo.iso(valid.performed_at)!, validUntil: repo.iso(valid.valid_until)! }
      : null,
    lastCheck: last
      ? {
          id: last.id,
          verdict: repo.verdictOf(last.verdict),
          performedAt: repo.iso(last.performed_at)!,
          validUntil: repo.iso(last.valid_until),
          performedByName: last.full_name,
        }
      : null,
    currentSpec: spec ? { id: spec.id, version: spec.version, kind: spec.kind } : null,
    required: states.map((s) => ({
      checkType: s.checkType,
      valid: !!s.valid,
      lastVerdict: s.latest ? repo.verdictOf(s.latest.verdict) : null,
      validUntil: repo.iso(s.valid?.valid_until),
    })),
  };
}

export interface CheckUpload {
  originalname: string;
  mimetype: string;
  buffer: Buffer;
}

/** The engine check for an approved specification of a type. */
function engineCheckOf(spec: repo.SpecRow, inst: repo.InstrumentRow): PerformanceCheck {
  const limits = repo.toSpec(spec).limits;
  switch (repo.checkTypeOf(spec.check_type)) {
    case 'polystyrene':
      return {
        type: 'polystyrene',
        options: { spec: engineSpecOf(spec), mode: inst.sampling === 'atr' ? 'atr' : 'transmission' },
      };
    case 'atr-blank':
      return { type: 'atr-blank', limits: limits as BlankLimits };
    case 'noise':
      return { type: 'noise', limits: limits as NoiseLimits };
    case 'nir-wavelength':
      return { type: 'nir-wavelength', limits: limits as WavelengthLimits };
    case 'nir-photometric-noise':
      return { type: 'nir-photometric-noise', limits: limits as PhotometricNoiseLimits };
  }
}

/**
 * The content a check's performer signs. A polystyrene check signs its bands (as before the
 * other check types existed); the other types sign their whole result.
 */
export function checkSignedContent(c: {
  id: number;
  instrumentId: number;
  specId: number;
  checkType: CheckType;
  fileSha256: string;
  result: AnyCheckResult | null;
}) {
  if (c.checkType === 'polystyrene')
    return {
      checkId: c.id,
      instrumentId: c.instrumentId,
      specId: c.specId,
      fileSha256: c.fileSha256,
      verdict: c.result?.verdict,
      bands: isPolystyreneResult(c.result) ? c.result.bands : undefined,
    };
  return {
    checkId: c.id,
    instrumentId: c.instrumentId,
    specId: c.specId,
    checkType: c.checkType,
    fileSha256: c.fileSha256,
    verdict: c.result?.verdict,
    result: c.result,
  };
}

export async function recordCheck(
  db: Knex,
  user: AuthUser,
  instrumentId: number,
  checkType: CheckType,
  file: CheckUpload | undefined,
  signature: SignatureInput,
  ip: string | null,
): Promise<InstrumentCheckView> {
  const inst = await repo.findInstrument(db, instrumentId);
  if (!inst) throw notFound('The instrument');
  if (!inst.active) throw conflict('This instrument is out of use; reactivate it before checking it.');
  if (!checkTypeFits(checkType, inst))
    throw unprocessable(
      'CHECK_TYPE_UNFIT',
      `${CHECK_TYPE_LABELS[checkType]} does not apply to ${inst.name} (${inst.technique}, ${inst.sampling}).`,
    );
  if (!file) throw unprocessable('NO_FILE', 'Choose the check spectrum file (field "file").');
  const spec = await repo.approvedSpecOf(db, instrumentId, checkType);
  if (!spec)
    throw conflict(
      `This instrument has no approved ${CHECK_TYPE_LABELS[checkType]} specification; QA must approve one first.`,
    );
  // Reading and the check run in the compute pool (a big file never holds the event loop).
  let result: PerformanceResult;
  let sha: string;
  let keys: ProvenanceKeys;
  try {
    ({ result, sha256: sha, keys } = await instrumentCheckOff(file, engineCheckOf(spec, inst)));
  } catch (e) {
    throw spectrumRefusal(e, file.originalname);
  }
  // A check is a new acquisition of the standard each time: an earlier check's file (or a sample's,
  // or a reference's) copied or re-exported would make the instrument look checked when it was not.
  const copy = await findCopy(db, sha, await readSpectrumOff(new Uint8Array(file.buffer), file.originalname), keys);
  if (copy) throw copyRefusal(copy, `the ${CHECK_TYPE_LABELS[checkType]} check`);
  await checkSignatureCredentials(db, {
    user,
    credentials: signature,
    meaning: 'instrument-check',
    entityType: 'instrument',
    entityId: instrumentId,
    ip,
  });
  const actor = { id: user.id, name: user.fullName };
  const checkId = await transactionWithRetry(db, async (trx) => {
    await trx('instrument').where({ id: instrumentId }).forUpdate().first();
    const current = await repo.approvedSpecOf(trx, instrumentId, checkType);
    if (!current || current.id !== spec.id)
      throw conflict('The check specification changed while you were signing; upload the spectrum again.');
    await lockAndRecheck(trx, sha, keys);
    const performedAt = new Date();
    const validUntil =
      result.verdict === 'pass' ? new Date(performedAt.getTime() + inst.check_validity_hours * 3600_000) : null;
    const { id: fileId } = await storeFile(trx, file, user.id, performedAt, sha);
    const [id] = await trx('instrument_check').insert({
      instrument_id: instrumentId,
      check_type: checkType,
      spec_id: spec.id,
      file_id: fileId,
      result: JSON.stringify(result),
      verdict: result.verdict,
      engine_version: result.engineVersion,
      performed_by: user.id,
      performed_at: performedAt,
      valid_until: validUntil,
      signature_id: null,
    });
    // indexed for the copy lookup: a sample can never be this check's spectrum (docs/provenance.md)
    await recordFingerprint(trx, {
      fileId,
      recordType: 'instrument-check',
      recordId: id,
      sha256: sha,
      keys,
      at: performedAt,
    });
    const sig = await recordSignature(trx, {
      user,
      credentials: signature,
      meaning: 'instrument-check',
      entityType: 'instrument_check',
      entityId: id,
      content: checkSignedContent({ id, instrumentId, specId: spec.id, checkType, fileSha256: sha, result }),
      ip,
    });
    await trx('instrument_check').where({ id }).update({ signature_id: sig.id });
    await appendAudit(trx, {
      actor,
      action: result.verdict === 'pass' ? 'instrument.check-passed' : 'instrument.check-failed',
      entityType: 'instrument_check',
      entityId: id,
      after: {
        instrumentId,
        checkType,
        specId: spec.id,
        file: { id: fileId, name: file.originalname, sha256: sha },
        verdict: result.verdict,
        result,
        validUntil: validUntil?.toISOString() ?? null,
        signatureId: sig.id,
      },
      ip,
    });
    if (result.verdict === 'fail') await openLookback(trx, { id, instrumentId, checkType, performedAt }, actor, ip);
    return id;
  });
  const row = must(
    await db('instrument_check').where({ id: checkId }).first(),
    `instrument check ${checkId} just recorded`,
  );
  return {
    ...repo.toCheck(row),
    signature: (await signaturesFor(db, 'instrument_check', checkId))[0] ?? null,
    performedByName: user.fullName,
  };
}

export async function checkFile(db: Knex, instrumentId: number, checkId: number) {
  const c = await db('instrument_check').where({ id: checkId, instrument_id: instrumentId }).first();
  if (!c) throw notFound('The instrument check');
  return must(await db('stored_file').where({ id: c.file_id }).first(), `stored file ${c.file_id} of check ${c.id}`);
}

export interface ValidInstrumentCheck {
  id: number;
  instrumentId: number;
  specId: number;
  verdict: 'pass';
  performedAt: string;
  validUntil: string;
  performedBy: number;
}

/**
 * The instrument's valid check at `at` (default now) when it may be used for testing (in use, in
 * service, every required check type valid), or null. The check returned is the first required
 * type's (the wavenumber check of a mid-IR instrument): the one a measurement cites.
 *   getValidInstrumentCheck(instrumentId: number, at?: Date, db?: Knex): Promise<ValidInstrumentCheck | null>
 */
export async function getValidInstrumentCheck(
  instrumentId: number,
  at: Date = new Date(),
  db: Knex = getDb(),
): Promise<ValidInstrumentCheck | null> {
  const inst = await repo.findInstrument(db, instrumentId);
  if (!inst) return null;
  if ((await unusableReason(db, inst, at)) !== null) return null;
  const c = (await checkStates(db, inst, at))[0]?.valid;
  if (!c) return null;
  return {
    id: c.id,
    instrumentId,
    specId: c.spec_id,
    verdict: 'pass',
    performedAt: repo.iso(c.performed_at)!,
    validUntil: repo.iso(c.valid_until)!,
    performedBy: c.performed_by,
  };
}
