/**
 * Instrument checks: a spectrum judged by the engine against the instrument's approved
 * specification, stored with its raw file, the result and the performer's signature (meaning
 * "instrument-check") in one transaction. A failing check is stored as well. valid_until =
 * performed_at + check_validity_hours when passed, null when failed.
 * "Check due": no passing check whose validity has not ended. getValidInstrumentCheck is the
 * testing module's gate.
 */
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import { storeFile } from '../../lib/files';
import { getDb } from '../../lib/db';
import type { SignatureInput } from '../../lib/contract';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { conflict, notFound, spectrumRefusal, unprocessable } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { type PolystyreneResult } from '../../spectra';
import { instrumentCheckOff } from '../../workers/pool';
import * as repo from './repo';
import type { CheckResult, InstrumentCheckState, InstrumentCheckView } from './contract';

import { engineSpecOf } from './specifications';

// Compile-time: the engine's polystyrene result is what the contract calls a stored check result.
const _storedResultShape = (r: PolystyreneResult): CheckResult => r;
void _storedResultShape;

export async function statusOf(db: Knex, i: repo.InstrumentRow, now: Date): Promise<InstrumentCheckState> {
  const valid = await repo.validCheckOf(db, i.id, now);
  const last: (repo.CheckRow & { full_name: string | null }) | undefined = await db('instrument_check as c')
    .leftJoin('app_user as u', 'u.id', 'c.performed_by')
    .where('c.instrument_id', i.id)
    .orderBy('c.performed_at', 'desc')
    .orderBy('c.id', 'desc')
    .select('c.*', 'u.full_name')
    .first();
  const spec = await repo.approvedSpecOf(db, i.id);
  return {
    checkDue: !valid,
    validCheck: valid
      ? { id: valid.id, performedAt: repo.iso(valid.performed_at)!, validUntil: repo.iso(valid.valid_until)! }
      : null,
    lastCheck: last
      ? {
          id: last.id,
          verdict: last.verdict,
          performedAt: repo.iso(last.performed_at)!,
          validUntil: repo.iso(last.valid_until),
          performedByName: last.full_name,
        }
      : null,
    currentSpec: spec ? { id: spec.id, version: spec.version, kind: spec.kind } : null,
  };
}

export interface CheckUpload {
  originalname: string;
  mimetype: string;
  buffer: Buffer;
}

export async function recordCheck(
  db: Knex,
  user: AuthUser,
  instrumentId: number,
  file: CheckUpload | undefined,
  signature: SignatureInput,
  ip: string | null,
): Promise<InstrumentCheckView> {
  const inst = await repo.findInstrument(db, instrumentId);
  if (!inst) throw notFound('The instrument');
  if (!inst.active) throw conflict('This instrument is out of use; reactivate it before checking it.');
  if (!file) throw unprocessable('NO_FILE', 'Choose the polystyrene film spectrum file (field "file").');
  const spec = await repo.approvedSpecOf(db, instrumentId);
  if (!spec) throw conflict('This instrument has no approved check specification; QA must approve one first.');
  // Reading and the polystyrene check run in the compute pool (a big file never holds the event loop).
  let result: PolystyreneResult;
  let sha: string;
  try {
    ({ result, sha256: sha } = await instrumentCheckOff(file, {
      spec: engineSpecOf(spec),
      mode: inst.sampling === 'atr' ? 'atr' : 'transmission',
    }));
  } catch (e) {
    throw spectrumRefusal(e, file.originalname);
  }
  await checkSignatureCredentials(db, {
    user,
    credentials: signature,
    meaning: 'instrument-check',
    entityType: 'instrument',
    entityId: instrumentId,
    ip,
  });
  const checkId = await db.transaction(async (trx) => {
    await trx('instrument').where({ id: instrumentId }).forUpdate().first();
    const current = await repo.approvedSpecOf(trx, instrumentId);
    if (!current || current.id !== spec.id)
      throw conflict('The check specification changed while you were signing; upload the spectrum again.');
    const performedAt = new Date();
    const validUntil =
      result.verdict === 'pass' ? new Date(performedAt.getTime() + inst.check_validity_hours * 3600_000) : null;
    const { id: fileId } = await storeFile(trx, file, user.id, performedAt, sha);
    const [id] = await trx('instrument_check').insert({
      instrument_id: instrumentId,
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
    const sig = await recordSignature(trx, {
      user,
      credentials: signature,
      meaning: 'instrument-check',
      entityType: 'instrument_check',
      entityId: id,
      content: {
        checkId: id,
        instrumentId,
        specId: spec.id,
        fileSha256: sha,
        verdict: result.verdict,
        bands: result.bands,
      },
      ip,
    });
    await trx('instrument_check').where({ id }).update({ signature_id: sig.id });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: result.verdict === 'pass' ? 'instrument.check-passed' : 'instrument.check-failed',
      entityType: 'instrument_check',
      entityId: id,
      after: {
        instrumentId,
        specId: spec.id,
        file: { id: fileId, name: file.originalname, sha256: sha },
        verdict: result.verdict,
        bands: result.bands,
        validUntil: validUntil?.toISOString() ?? null,
        signatureId: sig.id,
      },
      ip,
    });
    return id as number;
  });
  const row = (await db('instrument_check').where({ id: checkId }).first()) as repo.CheckRow;
  return {
    ...repo.toCheck(row),
    signature: (await signaturesFor(db, 'instrument_check', checkId))[0] ?? null,
    performedByName: user.fullName,
  };
}

export async function checkFile(db: Knex, instrumentId: number, checkId: number) {
  const c = await db('instrument_check').where({ id: checkId, instrument_id: instrumentId }).first();
  if (!c) throw notFound('The instrument check');
  return db('stored_file').where({ id: c.file_id }).first();
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
 * The passing, unexpired instrument check of an instrument at `at` (default now), or null when
 * the check is due. For the testing module (tests on an instrument without one are refused):
 *   getValidInstrumentCheck(instrumentId: number, at?: Date, db?: Knex): Promise<ValidInstrumentCheck | null>
 */
export async function getValidInstrumentCheck(
  instrumentId: number,
  at: Date = new Date(),
  db: Knex = getDb(),
): Promise<ValidInstrumentCheck | null> {
  const inst = await repo.findInstrument(db, instrumentId);
  if (!inst || !inst.active) return null;
  const c = await repo.validCheckOf(db, instrumentId, at);
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
