/**
 * Reference spectra: upload (draft), band editing while draft, approval with e-signature after
 * the specificity gate, retirement. Nothing is deleted; status and signatures carry the history.
 *
 * Rules decided here:
 * - Upload is one batch, all or nothing: every file is read by the engine, checked for
 *   measurement quality and prepared under the material's current method (the approved
 *   version, else the draft) BEFORE anything is written; the first refusal answers 422 with
 *   the file name and the engine's sentence, and nothing of the batch is stored. The client
 *   sends one file per request to show progress per file, so each file is then atomic alone.
 * - Bands are picked under that method and frozen at approval; QA edits them only while the
 *   reference is a draft (audited with before/after and a reason).
 * - Approval: qa_manager only (route), never the uploader (403), the material must have an
 *   approved method (a material's first references are approved together with its first method
 *   version, service.ts approveMethod), the password is asked again, then the specificity gate runs
 *   with the method's margins (docs/methods.md): a pair that would pass, comes within the margin of
 *   a limit, or could not be compared refuses approval (409 SPECIFICITY_GATE, audited). Only an
 *   override overrules it: one QA manager requests it (justification, change-control reference,
 *   signature), a second confirms it by approving with its id (meaning "approved-with-justification",
 *   the justification is the signed statement); neither is the uploader or the author of the
 *   method version (method-control.ts). The signed content is
 *   {referenceId, fileSha256, bands, methodVersionId} (canonical JSON, SHA-256).
 * - Retirement: qa_manager, a reason and a signature (meaning "retired"); drafts may be retired
 *   too (a bad upload is withdrawn, not deleted).
 */
import { transactionWithRetry } from '../../lib/retry';
import { must } from '../../lib/db';
import type { Knex } from 'knex';
import { appendAudit, auditNow, type Actor } from '../../lib/audit';
import type { SignatureInput } from '../../lib/contract';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { AppError, badRequest, conflict, forbidden, notFound, spectrumRefusal } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { enqueueMailToRole } from '../../lib/mail';
import { recordFingerprint } from '../provenance';
import type { ProvenanceKeys } from '../../workers/tasks';
import type { IdentityMethod, Spectrum } from '../../spectra';
import { referenceOff } from '../../workers/pool';
import { invalidateLibraryCache } from './approved-set';
import { assignmentText, bandCandidates, qaAssignmentOf, round, spectrumOfFile, withShownAssignments } from './engine';
import type {
  GateReport,
  ReferenceDetail,
  ReferenceListItem,
  ReferenceOverlay,
  ReferenceStatus,
  StoredBand,
} from './contract';
import * as repo from './repo';
import { specificityGate } from './specificity';
import { gateHash } from './gate';
import { checkOverride, confirmOverride, overridesOf, recordOverrideRequest } from './method-control';
import { storeFile } from '../../lib/files';

export interface UploadedFile {
  originalname: string;
  mimetype: string;
  size: number;
  buffer: Buffer;
}

export interface UploadFields {
  supplier: string;
  supplierLot: string;
  measuredHow: string;
  instrumentId?: number;
}

/** The method a reference of this material is read under: the approved version, else the latest draft. */
async function currentMethod(db: Knex | Knex.Transaction, materialId: number): Promise<repo.MethodRow> {
  const m = (await repo.approvedMethodOf(db, materialId)) ?? (await repo.latestMethodOf(db, materialId));
  if (!m) throw conflict('This material has no identity method yet; create one first.');
  return m;
}

export async function uploadReferences(
  db: Knex,
  user: AuthUser,
  materialId: number,
  files: UploadedFile[],
  fields: UploadFields,
  ip: string | null,
): Promise<ReferenceDetail[]> {
  const mat = await repo.findMaterial(db, materialId);
  if (!mat) throw notFound('The material');
  if (!mat.active) throw conflict('This material is inactive; reactivate it before adding references.');
  if (!files || files.length === 0) throw badRequest('Choose at least one spectrum file (field "files").');
  if (fields.instrumentId && !(await db('instrument').where({ id: fields.instrumentId }).first()))
    throw badRequest('The instrument named does not exist.');
  const methodRow = await currentMethod(db, materialId);
  const method = JSON.parse(methodRow.params) as IdentityMethod;

  // 1. Read, check and pick bands for every file before writing anything (in the compute pool,
  //    one file after another, so a batch of big files never holds the event loop).
  const parsed: {
    file: UploadedFile;
    spectrum: Spectrum;
    bands: StoredBand[];
    sha256: string;
    keys: ProvenanceKeys;
  }[] = [];
  for (const f of files) {
    let out: Awaited<ReturnType<typeof referenceOff>>;
    try {
      out = await referenceOff(f, method);
    } catch (e) {
      throw spectrumRefusal(e, f.originalname);
    }
    if (!out.quality.ok) {
      const p = out.quality.problems[0];
      throw new AppError(422, p.code, `${f.originalname}: ${p.message} ${p.advice}`.trim(), {
        fileName: f.originalname,
        code: p.code,
        problems: out.quality.problems,
      });
    }
    parsed.push({ file: f, spectrum: out.spectrum, bands: out.bands, sha256: out.sha256, keys: out.keys });
  }

  // 2. One transaction for the whole batch.
  const actor: Actor = { id: user.id, name: user.fullName };
  const ids = await transactionWithRetry(db, async (trx) => {
    await trx('material').where({ id: materialId }).forUpdate().first();
    const existing = await trx('reference_spectrum').where({ material_id: materialId }).count({ n: '*' }).first();
    let seq = Number(existing?.n ?? 0);
    const out: number[] = [];
    const now = new Date();
    for (const p of parsed) {
      seq++;
      const { id: fileId } = await storeFile(trx, p.file, user.id, now, p.sha256);
      const code = `REF-${mat.code}-${String(seq).padStart(4, '0')}`;
      const meta = {
        ...p.spectrum.meta,
        bandsPickedWithMethodId: methodRow.id,
        bandsPickedWithMethodVersion: methodRow.version,
      };
      const id = await repo.insertReference(trx, {
        material_id: materialId,
        code,
        file_id: fileId,
        status: 'draft',
        technique: methodRow.technique,
        supplier: fields.supplier ?? '',
        supplier_lot: fields.supplierLot ?? '',
        measured_how: fields.measuredHow || null,
        instrument_id: fields.instrumentId ?? null,
        bands: JSON.stringify(p.bands),
        meta: JSON.stringify(meta),
        specificity: null,
        justification: null,
        created_by: user.id,
        created_at: now,
        updated_at: now,
        approved_signature_id: null,
        approved_method_id: null,
        approved_at: null,
        retired_signature_id: null,
        retire_reason: null,
      });
      // indexed for the copy lookup: a sample can never be this reference's spectrum (docs/provenance.md)
      await recordFingerprint(trx, {
        fileId,
        recordType: 'reference',
        recordId: id,
        sha256: p.sha256,
        keys: p.keys,
        at: now,
      });
      await appendAudit(trx, {
        actor,
        action: 'reference.uploaded',
        entityType: 'reference_spectrum',
        entityId: id,
        after: {
          code,
          materialId,
          status: 'draft',
          file: { id: fileId, name: p.file.originalname, sha256: p.sha256, size: p.file.buffer.length },
          supplier: fields.supplier,
          supplierLot: fields.supplierLot,
          measuredHow: fields.measuredHow,
          instrumentId: fields.instrumentId ?? null,
          bands: p.bands.length,
          methodId: methodRow.id,
        },
        ip,
      });
      out.push(id);
    }
    const codes = out.length === 1 ? `reference ${seq}` : `${out.length} references`;
    await enqueueMailToRole(
      trx,
      'qa_manager',
      `Drumline: ${out.length === 1 ? 'a reference awaits' : `${out.length} references await`} approval (${mat.code})`,
      `${user.fullName} uploaded ${codes} for ${mat.code} ${mat.name}. Another QA manager must review the bands and approve ` +
        `(after the specificity check) in the reference library.`,
      user.id,
    );
    return out;
  });
  return Promise.all(ids.map((id) => getReference(db, id)));
}

export async function getReference(
  db: Knex,
  id: number,
  viewer?: { roles: readonly string[] },
): Promise<ReferenceDetail> {
  const r = await repo.findReference(db, id);
  if (!r) throw notFound('The reference spectrum');
  const file = await db('stored_file')
    .where({ id: r.file_id })
    .select('id', 'sha256', 'file_name', 'media_type', 'size', 'uploaded_at')
    .first();
  const mat = await repo.findMaterial(db, r.material_id);
  const uploader = await db('app_user').where({ id: r.created_by }).select('full_name').first();
  const instrument = r.instrument_id
    ? await db('instrument').where({ id: r.instrument_id }).select('id', 'name').first()
    : null;
  const summary = repo.toReference(r);
  // The table's candidates only for QA reviewing a draft (docs/methods.md, "Band assignments").
  const candidates =
    viewer?.roles.includes('qa_manager') && summary.status === 'draft' ? bandCandidates(summary.bands) : undefined;
  return {
    ...summary,
    bands: withShownAssignments(summary.bands),
    ...(candidates ? { bandCandidates: candidates } : {}),
    material: mat ? { id: mat.id, code: mat.code, name: mat.name, grade: mat.grade } : null,
    uploadedByName: uploader?.full_name ?? null,
    instrument: instrument ? { id: instrument.id, name: instrument.name } : null,
    file: file
      ? {
          id: file.id,
          sha256: file.sha256,
          fileName: file.file_name,
          mediaType: file.media_type,
          size: file.size,
          uploadedAt: new Date(file.uploaded_at).toISOString(),
        }
      : null,
    signatures: await signaturesFor(db, 'reference_spectrum', id),
    overrides: await overridesOf(db, 'reference_spectrum', id),
  };
}

export async function listReferences(db: Knex, materialId: number): Promise<ReferenceListItem[]> {
  const rows = await repo.referencesOf(db, materialId);
  const sigIds = rows.flatMap((r) => [r.approved_signature_id, r.retired_signature_id]).filter((x): x is number => !!x);
  const sigs = sigIds.length ? await db('e_signature').whereIn('id', sigIds) : [];
  const users = await db('app_user')
    .whereIn('id', [...new Set(rows.map((r) => r.created_by)), 0])
    .select('id', 'full_name');
  return rows.map((r) => {
    const s = sigs.find((x) => x.id === r.approved_signature_id);
    const { bands, ...rest } = repo.toReference(r);
    return {
      ...rest,
      bandCount: bands.length,
      uploadedByName: users.find((u) => u.id === r.created_by)?.full_name ?? null,
      approvedBy: s
        ? { printedName: s.printed_name, meaning: s.meaning, signedAt: new Date(s.signed_at).toISOString() }
        : null,
    };
  });
}

/** References across all materials by status (e.g. drafts awaiting approval, for the QA work queue). */
export async function referencesByStatus(db: Knex, status: ReferenceStatus): Promise<ReferenceListItem[]> {
  const rows = await db('reference_spectrum as r')
    .join('material as m', 'm.id', 'r.material_id')
    .join('app_user as u', 'u.id', 'r.created_by')
    .where('r.status', status)
    .select<(repo.ReferenceRow & { m_code: string; m_name: string; uploader: string })[]>(
      'r.*',
      'm.code as m_code',
      'm.name as m_name',
      'u.full_name as uploader',
    )
    .orderBy('r.created_at', 'asc')
    .limit(500);
  return rows.map((r) => {
    const { bands, meta: _meta, specificity: _s, ...rest } = repo.toReference(r);
    return {
      ...rest,
      bandCount: bands.length,
      materialCode: r.m_code,
      materialName: r.m_name,
      uploadedByName: r.uploader,
    };
  });
}

/** Absorbance traces of this reference and the other non-retired references of its grade, for the overlay plot. */
export async function referenceOverlay(db: Knex, id: number): Promise<ReferenceOverlay> {
  const r = await repo.findReference(db, id);
  if (!r) throw notFound('The reference spectrum');
  const rows = (await repo.referencesOf(db, r.material_id)).filter((x) => x.id === id || x.status !== 'retired');
  const traces = [];
  for (const x of rows) {
    const s = await spectrumOfFile(db, x.file_id);
    traces.push({
      referenceId: x.id,
      code: x.code,
      status: repo.referenceStatus(x.status),
      isThis: x.id === id,
      x: Array.from(s.x, (v) => round(v, 3)),
      y: Array.from(s.y, (v) => round(v, 5)),
    });
  }
  return { referenceId: id, traces };
}

export async function updateBands(
  db: Knex,
  actor: Actor,
  id: number,
  input: { bands: { position: number; assignment?: string }[]; reason: string },
  ip: string | null,
): Promise<ReferenceDetail> {
  await transactionWithRetry(db, async (trx) => {
    const before = await trx('reference_spectrum').where({ id }).forUpdate().first();
    if (!before) throw notFound('The reference spectrum');
    if (before.status !== 'draft')
      throw new AppError(
        409,
        'REFERENCE_IMMUTABLE',
        `Reference ${before.code} is ${before.status}; its bands can only be changed while it is a draft.`,
      );
    const old = repo.toReference(before).bands;
    const sorted = [...input.bands].sort((a, b) => a.position - b.position);
    for (let i = 1; i < sorted.length; i++)
      if (Math.abs(sorted[i].position - sorted[i - 1].position) < 0.5)
        throw badRequest(`Two bands sit at ${sorted[i].position} cm-1; list each band once.`);
    const next: StoredBand[] = sorted.map((b) => {
      const same = old.find((o) => Math.abs(o.position - b.position) < 0.005);
      const text = b.assignment && b.assignment.trim() ? b.assignment.trim() : '';
      // The text QA types is QA's assignment of the band (signed with the reference at approval);
      // the table's candidate text stays in `assignment` and is never shown as an assignment.
      if (same && text === (qaAssignmentOf(same) ?? '')) return same;
      return {
        position: round(b.position, 2),
        prominence: same?.prominence,
        width: same?.width,
        assignment: same?.assignment ?? assignmentText(b.position, same?.width),
        qaAssignment: text,
        origin: 'edited',
      };
    });
    await trx('reference_spectrum')
      .where({ id })
      .update({ bands: JSON.stringify(next), updated_at: new Date() });
    await appendAudit(trx, {
      actor,
      action: 'reference.bands-edited',
      entityType: 'reference_spectrum',
      entityId: id,
      before: { bands: old },
      after: { bands: next },
      reason: input.reason,
      ip,
    });
  });
  return getReference(db, id);
}

/** What the approval signature of a reference covers. */
export function referenceSignedContent(
  referenceId: number,
  fileSha256: string,
  bands: StoredBand[],
  methodVersionId: number,
) {
  return { referenceId, fileSha256, bands, methodVersionId };
}

/** The specificity gate without signing (preview for the approval dialog). */
export async function previewGate(db: Knex, id: number): Promise<GateReport> {
  const r = await repo.findReference(db, id);
  if (!r) throw notFound('The reference spectrum');
  const method = await repo.approvedMethodOf(db, r.material_id);
  if (!method)
    throw conflict('The identity method of this material is not approved yet; approve it before approving references.');
  const spectrum = await spectrumOfFile(db, r.file_id);
  return specificityGate(
    db,
    { id: r.id, materialId: r.material_id, spectrum, bands: repo.toReference(r).bands },
    repo.toMethod(method),
  );
}

/** Who may not sign an override or approval of this reference: its uploader and the author of the method it is judged under. */
function excludedFor(r: repo.ReferenceRow, method: repo.MethodRow) {
  return [
    { userId: r.created_by, why: 'You uploaded this reference.' },
    {
      userId: method.created_by,
      why: `You wrote the method version (${method.version}) this reference is judged under.`,
    },
  ];
}

export async function requestReferenceOverride(
  db: Knex,
  user: AuthUser,
  id: number,
  input: { justification: string; changeControl: string; signature: SignatureInput },
  ip: string | null,
) {
  const r = await repo.findReference(db, id);
  if (!r) throw notFound('The reference spectrum');
  if (r.status !== 'draft') throw conflict(`Reference ${r.code} is ${r.status}; only a draft can be approved.`);
  const methodRow = await repo.approvedMethodOf(db, r.material_id);
  if (!methodRow)
    throw conflict('The identity method of this material is not approved yet; approve it before approving references.');
  const gate = await previewGate(db, id);
  return recordOverrideRequest(
    db,
    user,
    {
      entityType: 'reference_spectrum',
      entityId: id,
      label: `reference ${r.code}`,
      gatePassed: gate.passed,
      gate,
      gateSha256: gateHash(gate),
      excluded: excludedFor(r, methodRow),
      justification: input.justification,
      changeControl: input.changeControl,
      signature: input.signature,
    },
    ip,
  );
}

const PAIR_WORDS: Record<string, string> = {
  'would-pass': 'would pass',
  'within-margin': 'within the margin of a limit',
  'not-compared': 'not compared',
};

export async function approveReference(
  db: Knex,
  user: AuthUser,
  id: number,
  input: { signature: SignatureInput; overrideId?: number },
  ip: string | null,
): Promise<ReferenceDetail> {
  const r = await repo.findReference(db, id);
  if (!r) throw notFound('The reference spectrum');
  if (r.status !== 'draft') throw conflict(`Reference ${r.code} is ${r.status}; only a draft can be approved.`);
  if (r.created_by === user.id)
    throw forbidden('You uploaded this reference. Another QA manager must approve it (segregation of duties).');
  const methodRow = await repo.approvedMethodOf(db, r.material_id);
  if (!methodRow)
    throw conflict(
      'The identity method of this material is not approved yet: approve its first method version together with its first references.',
    );
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'approved',
    entityType: 'reference_spectrum',
    entityId: id,
    ip,
  });

  const actor = { id: user.id, name: user.fullName };
  const spectrum = await spectrumOfFile(db, r.file_id);
  const gate = await specificityGate(
    db,
    { id, materialId: r.material_id, spectrum, bands: repo.toReference(r).bands },
    repo.toMethod(methodRow),
  );
  let override: Awaited<ReturnType<typeof checkOverride>> | null = null;
  if (!gate.passed) {
    if (input.overrideId)
      override = await checkOverride(
        db,
        user,
        input.overrideId,
        'reference_spectrum',
        id,
        gateHash(gate),
        excludedFor(r, methodRow),
      );
    else {
      await auditNow(db, {
        actor,
        action: 'reference.approval-blocked',
        entityType: 'reference_spectrum',
        entityId: id,
        after: {
          offending: gate.offending.map((p) => ({
            referenceId: p.referenceId,
            materialCode: p.materialCode,
            state: p.state,
            otherAsSample: p.otherAsSample,
            candidateAsSample: p.candidateAsSample,
          })),
        },
        reason: 'specificity gate: another material would pass, comes within the margin, or could not be compared',
        ip,
      });
      const words = [
        ...new Set(gate.offending.map((p) => `${p.materialCode} (${PAIR_WORDS[p.state ?? 'would-pass']})`)),
      ];
      throw new AppError(
        409,
        'SPECIFICITY_GATE',
        `Approval refused: references of other materials are not shown distinct from this one under this grade's method: ${words.join(', ')}. ` +
          'Tighten the identity method, or have one QA manager request an override (justification and change control) and a second confirm it.',
        gate,
      );
    }
  }
  const justification = override?.justification ?? null;
  const meaning = override ? 'approved-with-justification' : 'approved';
  await transactionWithRetry(db, async (trx) => {
    const row = await trx('reference_spectrum').where({ id }).forUpdate().first();
    if (!row) throw notFound('The reference spectrum');
    if (row.status !== 'draft') throw conflict(`Reference ${row.code} was ${row.status} meanwhile by someone else.`);
    if (row.bands !== r.bands)
      throw conflict('The bands were changed while you were signing; review them and sign again.');
    const file = must(
      await trx('stored_file').where({ id: row.file_id }).select('sha256').first(),
      `stored file ${row.file_id} of reference ${row.code}`,
    );
    const bands = repo.toReference(row).bands;
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning,
      entityType: 'reference_spectrum',
      entityId: id,
      content: referenceSignedContent(id, file.sha256, bands, methodRow.id),
      statement: justification,
      ip,
    });
    const now = new Date();
    await trx('reference_spectrum')
      .where({ id })
      .update({
        status: 'approved',
        approved_signature_id: sig.id,
        approved_method_id: methodRow.id,
        approved_at: now,
        specificity: JSON.stringify(gate),
        justification,
        updated_at: now,
      });
    if (override) await confirmOverride(trx, actor, override.id, sig.id, { type: 'reference_spectrum', id }, ip);
    await appendAudit(trx, {
      actor,
      action: override ? 'reference.approved-with-justification' : 'reference.approved',
      entityType: 'reference_spectrum',
      entityId: id,
      before: { status: 'draft' },
      after: {
        status: 'approved',
        signatureId: sig.id,
        meaning,
        methodId: methodRow.id,
        gateOverrideId: override?.id ?? null,
        specificity: {
          passed: gate.passed,
          offending: gate.offending.map((p) => ({
            referenceId: p.referenceId,
            materialCode: p.materialCode,
            state: p.state,
          })),
        },
      },
      reason: justification,
      ip,
    });
  });
  invalidateLibraryCache();
  return getReference(db, id);
}

export async function retireReference(
  db: Knex,
  user: AuthUser,
  id: number,
  input: { reason: string; signature: SignatureInput },
  ip: string | null,
): Promise<ReferenceDetail> {
  const r = await repo.findReference(db, id);
  if (!r) throw notFound('The reference spectrum');
  if (r.status === 'retired') throw conflict(`Reference ${r.code} is already retired.`);
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'retired',
    entityType: 'reference_spectrum',
    entityId: id,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    const row = await trx('reference_spectrum').where({ id }).forUpdate().first();
    if (!row) throw notFound('The reference spectrum');
    if (row.status === 'retired') throw conflict(`Reference ${row.code} was retired meanwhile.`);
    const file = must(
      await trx('stored_file').where({ id: row.file_id }).select('sha256').first(),
      `stored file ${row.file_id} of reference ${row.code}`,
    );
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'retired',
      entityType: 'reference_spectrum',
      entityId: id,
      content: { referenceId: id, fileSha256: file.sha256, previousStatus: row.status, reason: input.reason },
      statement: input.reason,
      ip,
    });
    await trx('reference_spectrum')
      .where({ id })
      .update({ status: 'retired', retired_signature_id: sig.id, retire_reason: input.reason, updated_at: new Date() });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'reference.retired',
      entityType: 'reference_spectrum',
      entityId: id,
      before: { status: row.status },
      after: { status: 'retired', signatureId: sig.id },
      reason: input.reason,
      ip,
    });
  });
  invalidateLibraryCache();
  return getReference(db, id);
}

export async function referenceFile(db: Knex, id: number) {
  const r = await repo.findReference(db, id);
  if (!r) throw notFound('The reference spectrum');
  const f = await repo.findStoredFile(db, r.file_id);
  if (!f) throw notFound('The stored file');
  return f;
}
