/**
 * Instruments, their versioned check specifications and the polystyrene instrument checks.
 *
 * Rules decided here (the issue is silent on them):
 * - A new mid-IR instrument starts with check specification version 1 = the Ph. Eur. 2.2.24
 *   polystyrene positions with the FT tolerances (every band +-1.0 cm-1; Table 2.2.24.-1, see
 *   ../shared/domain-facts.md 1.1). It is the published standard adopted as is, so it is
 *   approved on creation without a separate signature (the creation is audited). An NIR
 *   instrument gets no default (polystyrene is a mid-IR standard): QA approves a site
 *   specification before its first check.
 * - Any other specification (a site-specific ATR one established at qualification, or a
 *   pharmacopoeial column again) is created and approved in one step by a qa_manager with an
 *   e-signature (meaning "approved") whose signed statement is the written justification
 *   (at least 20 characters). The previous approved version becomes superseded.
 * - A check is performed by an operator (also verifier or QA): the polystyrene film spectrum is
 *   read and judged by the engine's checkPolystyrene against the instrument's approved
 *   specification (ATR instruments: resolution not applicable), and stored with its raw file,
 *   the per-band table and the performer's signature (meaning "instrument-check"), all in one
 *   transaction. A failing check is stored as well. valid_until = performed_at +
 *   check_validity_hours when passed, null when failed.
 * - "Check due": no passing check whose validity has not ended. getValidInstrumentCheck is the
 *   testing module's gate.
 */
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import { storeFile } from '../../lib/files';
import { getDb } from '../../lib/db';
import type { SignatureInput } from '../../lib/contract';
import { checkSignatureCredentials, recordSignature, signaturesFor, toSignatureRecord } from '../../lib/esign';
import { conflict, notFound, spectrumRefusal, unprocessable } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import {
  PH_EUR_POLYSTYRENE_FT,
  PH_EUR_POLYSTYRENE_MONOCHROMATOR,
  type PolystyreneResult,
  type PolystyreneSpec,
} from '../../spectra';
import { instrumentCheckOff } from '../../workers/pool';
import type { ProvenanceKeys } from '../../workers/tasks';
import { recordFingerprint } from '../provenance/copies';
import * as repo from './repo';
import type {
  CheckBand,
  CheckResult,
  InstrumentCheckState,
  InstrumentCheckView,
  InstrumentCreate,
  InstrumentDetail,
  InstrumentListItem,
  InstrumentUpdate,
} from './contract';

// Compile-time: the engine's polystyrene result is what the contract calls a stored check result.
const _storedResultShape = (r: PolystyreneResult): CheckResult => r;
void _storedResultShape;

export const DEFAULT_SPEC_JUSTIFICATION =
  'Default: Ph. Eur. 2.2.24, Table 2.2.24.-1, polystyrene film positions with the FT-instrument tolerances (all bands +-1.0 cm-1).';

function pharmacopoeiaBands(kind: string): CheckBand[] {
  const spec = kind === 'pharmacopoeia-monochromator' ? PH_EUR_POLYSTYRENE_MONOCHROMATOR : PH_EUR_POLYSTYRENE_FT;
  return spec.bands.map((b) => ({ nominal: b.nominal, tolerance: b.tolerance }));
}

/** The engine specification for a stored specification row. */
export function engineSpecOf(spec: repo.SpecRow): PolystyreneSpec {
  const bands = repo.toSpec(spec).bands;
  const name =
    spec.kind === 'site'
      ? `Site specification v${spec.version} (QA-approved)`
      : spec.kind === 'pharmacopoeia-monochromator'
        ? PH_EUR_POLYSTYRENE_MONOCHROMATOR.name
        : PH_EUR_POLYSTYRENE_FT.name;
  return { name, bands, instrument: spec.kind === 'pharmacopoeia-monochromator' ? 'monochromator' : 'ft' };
}

async function statusOf(db: Knex, i: repo.InstrumentRow, now: Date): Promise<InstrumentCheckState> {
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

export async function listInstruments(db: Knex): Promise<InstrumentListItem[]> {
  const rows: repo.InstrumentRow[] = await db('instrument').orderBy('name');
  const now = new Date();
  return Promise.all(rows.map(async (r) => ({ ...repo.toInstrument(r), ...(await statusOf(db, r, now)) })));
}

export async function getInstrument(db: Knex, id: number): Promise<InstrumentDetail> {
  const i = await repo.findInstrument(db, id);
  if (!i) throw notFound('The instrument');
  const specs = await repo.specsOf(db, id);
  const checks = await repo.checksOf(db, id);
  const sigIds = [...specs.map((s) => s.approved_signature_id), ...checks.map((c) => c.signature_id)].filter(
    (x): x is number => !!x,
  );
  const sigs = sigIds.length ? (await db('e_signature').whereIn('id', sigIds)).map(toSignatureRecord) : [];
  const users: { id: number; full_name: string }[] = await db('app_user')
    .whereIn('id', [...new Set([...checks.map((c) => c.performed_by), ...specs.map((s) => s.created_by)]), 0])
    .select('id', 'full_name');
  const name = (uid: number) => users.find((u) => u.id === uid)?.full_name ?? null;
  return {
    ...repo.toInstrument(i),
    ...(await statusOf(db, i, new Date())),
    specs: specs.map((s) => ({
      ...repo.toSpec(s),
      createdByName: name(s.created_by),
      signature: sigs.find((x) => x.id === s.approved_signature_id) ?? null,
    })),
    checks: checks.map((c) => ({
      ...repo.toCheck(c),
      performedByName: name(c.performed_by),
      signature: sigs.find((x) => x.id === c.signature_id) ?? null,
    })),
  };
}

export async function createInstrument(
  db: Knex,
  actor: Actor,
  input: InstrumentCreate,
  ip: string | null,
): Promise<InstrumentDetail> {
  if (await db('instrument').where({ name: input.name }).first())
    throw conflict(`An instrument named "${input.name}" already exists.`);
  const id = await db.transaction(async (trx) => {
    const now = new Date();
    const [id] = await trx('instrument').insert({
      name: input.name,
      serial_number: input.serialNumber,
      technique: input.technique,
      sampling: input.sampling,
      location: input.location ?? '',
      check_validity_hours: input.checkValidityHours ?? 24,
      active: 1,
      created_by: actor.id!,
      created_at: now,
      updated_at: now,
    });
    const inst = repo.toInstrument((await repo.findInstrument(trx, id))!);
    await appendAudit(trx, {
      actor,
      action: 'instrument.created',
      entityType: 'instrument',
      entityId: id,
      after: inst,
      reason: input.reason ?? null,
      ip,
    });
    if (input.technique === 'mid-ir') {
      const bands = pharmacopoeiaBands('pharmacopoeia-ft');
      const [specId] = await trx('instrument_check_spec').insert({
        instrument_id: id,
        version: 1,
        kind: 'pharmacopoeia-ft',
        bands: JSON.stringify(bands),
        justification: DEFAULT_SPEC_JUSTIFICATION,
        status: 'approved',
        created_by: actor.id!,
        created_at: now,
        approved_signature_id: null,
      });
      await appendAudit(trx, {
        actor,
        action: 'instrument.spec-adopted',
        entityType: 'instrument_check_spec',
        entityId: specId,
        after: { instrumentId: id, version: 1, kind: 'pharmacopoeia-ft', bands, status: 'approved' },
        reason: DEFAULT_SPEC_JUSTIFICATION,
        ip,
      });
    }
    return id as number;
  });
  return getInstrument(db, id);
}

export async function updateInstrument(
  db: Knex,
  actor: Actor,
  id: number,
  patch: InstrumentUpdate,
  ip: string | null,
): Promise<InstrumentDetail> {
  await db.transaction(async (trx) => {
    const before = await trx('instrument').where({ id }).forUpdate().first();
    if (!before) throw notFound('The instrument');
    const upd: Record<string, unknown> = { updated_at: new Date() };
    if (patch.name !== undefined) upd.name = patch.name;
    if (patch.serialNumber !== undefined) upd.serial_number = patch.serialNumber;
    if (patch.sampling !== undefined) upd.sampling = patch.sampling;
    if (patch.location !== undefined) upd.location = patch.location;
    if (patch.checkValidityHours !== undefined) upd.check_validity_hours = patch.checkValidityHours;
    if (patch.active !== undefined) upd.active = patch.active ? 1 : 0;
    await trx('instrument').where({ id }).update(upd);
    const after = (await repo.findInstrument(trx, id))!;
    await appendAudit(trx, {
      actor,
      action: 'instrument.updated',
      entityType: 'instrument',
      entityId: id,
      before: repo.toInstrument(before),
      after: repo.toInstrument(after),
      reason: patch.reason,
      ip,
    });
  });
  return getInstrument(db, id);
}

/** The content a specification approval signs. */
export function specSignedContent(
  specId: number,
  instrumentId: number,
  version: number,
  kind: string,
  bands: CheckBand[],
) {
  return { specId, instrumentId, version, kind, bands };
}

export async function approveSpec(
  db: Knex,
  user: AuthUser,
  instrumentId: number,
  input: { kind: string; bands?: CheckBand[]; justification: string; signature: SignatureInput },
  ip: string | null,
): Promise<InstrumentDetail> {
  const inst = await repo.findInstrument(db, instrumentId);
  if (!inst) throw notFound('The instrument');
  const bands =
    input.kind === 'site' ? [...input.bands!].sort((a, b) => b.nominal - a.nominal) : pharmacopoeiaBands(input.kind);
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'approved',
    entityType: 'instrument',
    entityId: instrumentId,
    ip,
  });
  const actor: Actor = { id: user.id, name: user.fullName };
  await db.transaction(async (trx) => {
    await trx('instrument').where({ id: instrumentId }).forUpdate().first();
    const latest = await trx('instrument_check_spec')
      .where({ instrument_id: instrumentId })
      .max({ v: 'version' })
      .first();
    const version = Number(latest?.v ?? 0) + 1;
    const previous = await repo.approvedSpecOf(trx, instrumentId);
    const now = new Date();
    const [specId] = await trx('instrument_check_spec').insert({
      instrument_id: instrumentId,
      version,
      kind: input.kind,
      bands: JSON.stringify(bands),
      justification: input.justification,
      status: 'draft',
      created_by: user.id,
      created_at: now,
      approved_signature_id: null,
    });
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'approved',
      entityType: 'instrument_check_spec',
      entityId: specId,
      content: specSignedContent(specId, instrumentId, version, input.kind, bands),
      statement: input.justification,
      ip,
    });
    await trx('instrument_check_spec')
      .where({ id: specId })
      .update({ status: 'approved', approved_signature_id: sig.id });
    if (previous) {
      await trx('instrument_check_spec').where({ id: previous.id }).update({ status: 'superseded' });
      await appendAudit(trx, {
        actor,
        action: 'instrument.spec-superseded',
        entityType: 'instrument_check_spec',
        entityId: previous.id,
        before: { status: 'approved' },
        after: { status: 'superseded', supersededBy: specId },
        ip,
      });
    }
    await appendAudit(trx, {
      actor,
      action: 'instrument.spec-approved',
      entityType: 'instrument_check_spec',
      entityId: specId,
      before: previous ? repo.toSpec(previous) : null,
      after: { instrumentId, version, kind: input.kind, bands, status: 'approved', signatureId: sig.id },
      reason: input.justification,
      ip,
    });
  });
  return getInstrument(db, instrumentId);
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
  let keys: ProvenanceKeys;
  try {
    ({
      result,
      sha256: sha,
      keys,
    } = await instrumentCheckOff(file, {
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
    // indexed for the copy lookup: a sample can never be this film's spectrum (docs/provenance.md)
    await recordFingerprint(trx, {
      fileId: fileId as number,
      recordType: 'instrument-check',
      recordId: id as number,
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
