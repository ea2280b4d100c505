/**
 * Materials (grades) and their versioned identity methods.
 *
 * Rules decided here (the issue is silent on them):
 * - Creating a material also creates identity method version 1 as a draft, copied from the
 *   engine default of its first technique, so QA can upload references at once and tune the
 *   method before approving it.
 * - At most one draft method per material. Approving a draft supersedes the approved version.
 * - An approved (or superseded) method is immutable. PATCH on the approved version answers
 *   409 METHOD_IMMUTABLE and, because "editing it creates a new draft version", creates that
 *   draft with the requested changes applied (details.newDraftId). When a draft already exists
 *   nothing is created and details.draftId names it. POST /api/methods/:id/new-version does the
 *   same explicitly (201) without the error.
 * - Method approval is an e-signature (meaning "approved") by a qa_manager over
 *   {methodId, materialId, version, technique, params}.
 */
import { transactionWithRetry } from '../../lib/retry';
import type { Knex } from 'knex';
import { must } from '../../lib/db';
import type { IdentityMethodInsert, MaterialInsert } from '../../lib/db-tables';
import { appendAudit, auditNow, type Actor } from '../../lib/audit';
import { sha256Hex } from '../../lib/canonical';
import { storeFile } from '../../lib/files';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { AppError, conflict, forbidden, notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import {
  checkReferenceModel,
  defaultMidIrAtrMethod,
  defaultNirMethod,
  type IdentityMethod,
  prepare,
  SpectrumError,
  validateMethod,
} from '../../spectra';
import { spectrumOfFile, toEngineBands } from './engine';
import { gateHash, gateSentence, methodGate, type OwnReference } from './gate';
import {
  assertIrSuitable,
  checkOverride,
  confirmOverride,
  irSuitabilityMap,
  irSuitabilityOf,
  overridesOf,
  recordOverrideRequest,
} from './method-control';
import { referenceSignedContent } from './references';
import { assembleValidationRecord, validationRecordPdf } from './validation-record';
import { invalidateLibraryCache } from './approved-set';
import * as repo from './repo';
import type {
  ApproveMethodInput,
  GateOverrideRequestInput as GateOverrideRequest,
  MethodApprovalRecord,
  MethodGateReport,
  Material,
  MaterialCreate,
  MaterialDetail,
  MaterialListItem,
  MaterialUpdate,
  MethodWithSignatures,
} from './contract';

/** The engine default for a technique (transmission starts from the ATR default with its technique). */
export function defaultMethodFor(technique: string): IdentityMethod {
  if (technique === 'nir') return structuredClone(defaultNirMethod);
  const m = structuredClone(defaultMidIrAtrMethod);
  m.technique = technique === 'mid-ir-transmission' ? 'mid-ir-transmission' : 'mid-ir-atr';
  return m;
}

/** zod checked the shape; the engine knows the cross-field rules. */
export function assertMethodValid(params: IdentityMethod): void {
  const problems = validateMethod(params);
  if (problems.length)
    throw new AppError(400, 'INVALID_METHOD', `The identity method is not valid: ${problems.join(' ')}`, { problems });
}

export async function listMaterials(db: Knex): Promise<MaterialListItem[]> {
  const mats = await repo.listMaterialRows(db);
  const methods = await db('identity_method').whereIn('status', ['approved', 'draft']);
  const counts = await db('reference_spectrum')
    .select('material_id', 'status')
    .count({ n: '*' })
    .groupBy('material_id', 'status');
  const ir = await irSuitabilityMap(db);
  return mats.map((m) => {
    const approved = methods
      .filter((x) => x.material_id === m.id && x.status === 'approved')
      .sort((a, b) => b.version - a.version)[0];
    const draft = methods.find((x) => x.material_id === m.id && x.status === 'draft');
    const c = (s: string) => Number(counts.find((x) => x.material_id === m.id && x.status === s)?.n ?? 0);
    return {
      ...repo.toMaterial(m),
      irSuitability: ir.get(m.id) ?? null,
      approvedMethod: approved ? { id: approved.id, version: approved.version, technique: approved.technique } : null,
      draftMethodId: draft?.id ?? null,
      references: { draft: c('draft'), approved: c('approved'), retired: c('retired') },
    };
  });
}

export async function methodWithSignatures(db: Knex, row: repo.MethodRow): Promise<MethodWithSignatures> {
  return {
    ...repo.toMethod(row),
    signatures: await signaturesFor(db, 'identity_method', row.id),
    approval: await approvalOf(db, row.id),
    overrides: await overridesOf(db, 'identity_method', row.id),
  };
}

export async function getMaterial(db: Knex, id: number): Promise<MaterialDetail> {
  const m = await repo.findMaterial(db, id);
  if (!m) throw notFound('The material');
  const methods = await repo.methodsOf(db, id);
  return {
    ...repo.toMaterial(m),
    irSuitability: await irSuitabilityOf(db, id),
    methods: await Promise.all(methods.map((r) => methodWithSignatures(db, r))),
  };
}

export async function createMaterial(
  db: Knex,
  actor: Actor,
  input: MaterialCreate,
  ip: string | null,
): Promise<Material & { draftMethodId: number }> {
  if (await db('material').where({ code: input.code }).first())
    throw conflict(`A material with the code "${input.code}" already exists.`);
  return transactionWithRetry(db, async (trx) => {
    const now = new Date();
    const id = await repo.insertMaterial(trx, {
      code: input.code,
      name: input.name,
      grade: input.grade ?? '',
      monograph_ref: input.monographRef ?? '',
      techniques: JSON.stringify(input.techniques),
      notes: input.notes ?? null,
      active: 1,
      created_by: actor.id!,
      created_at: now,
      updated_at: now,
    });
    const params = defaultMethodFor(input.techniques[0]);
    const methodId = await repo.insertMethod(trx, {
      material_id: id,
      version: 1,
      status: 'draft',
      technique: params.technique,
      params: JSON.stringify(params),
      change_note: 'First version, from the engine default for this technique.',
      supersedes_id: null,
      created_by: actor.id!,
      created_at: now,
      updated_at: now,
      approved_signature_id: null,
      approved_at: null,
    });
    const mat = repo.toMaterial(must(await repo.findMaterial(trx, id), `material ${id} just inserted`));
    await appendAudit(trx, {
      actor,
      action: 'material.created',
      entityType: 'material',
      entityId: id,
      after: mat,
      reason: input.reason ?? null,
      ip,
    });
    await appendAudit(trx, {
      actor,
      action: 'method.created',
      entityType: 'identity_method',
      entityId: methodId,
      after: { materialId: id, version: 1, status: 'draft', params },
      reason: 'first version with the new material',
      ip,
    });
    return { ...mat, draftMethodId: methodId };
  });
}

export async function updateMaterial(
  db: Knex,
  actor: Actor,
  id: number,
  patch: MaterialUpdate,
  ip: string | null,
): Promise<Material> {
  return transactionWithRetry(db, async (trx) => {
    const before = await trx('material').where({ id }).forUpdate().first();
    if (!before) throw notFound('The material');
    const upd: Partial<MaterialInsert> = { updated_at: new Date() };
    if (patch.name !== undefined) upd.name = patch.name;
    if (patch.grade !== undefined) upd.grade = patch.grade;
    if (patch.monographRef !== undefined) upd.monograph_ref = patch.monographRef;
    if (patch.techniques !== undefined) upd.techniques = JSON.stringify(patch.techniques);
    if (patch.notes !== undefined) upd.notes = patch.notes;
    if (patch.active !== undefined) upd.active = patch.active ? 1 : 0;
    await trx('material').where({ id }).update(upd);
    const after = must(await repo.findMaterial(trx, id), `material ${id} just updated`);
    await appendAudit(trx, {
      actor,
      action: 'material.updated',
      entityType: 'material',
      entityId: id,
      before: repo.toMaterial(before),
      after: repo.toMaterial(after),
      reason: patch.reason,
      ip,
    });
    return repo.toMaterial(after);
  });
}

// ---------------------------------------------------------------- methods

async function insertDraftVersion(
  trx: Knex.Transaction,
  actor: Actor,
  materialId: number,
  base: repo.MethodRow | undefined,
  params: IdentityMethod,
  changeNote: string | null,
  reason: string | null,
  ip: string | null,
): Promise<number> {
  const latest = await trx('identity_method').where({ material_id: materialId }).max({ v: 'version' }).first();
  const version = Number(latest?.v ?? 0) + 1;
  const now = new Date();
  const id = await repo.insertMethod(trx, {
    material_id: materialId,
    version,
    status: 'draft',
    technique: params.technique,
    params: JSON.stringify(params),
    change_note: changeNote,
    supersedes_id: base?.id ?? null,
    created_by: actor.id!,
    created_at: now,
    updated_at: now,
    approved_signature_id: null,
    approved_at: null,
  });
  await appendAudit(trx, {
    actor,
    action: 'method.created',
    entityType: 'identity_method',
    entityId: id,
    before: base ? { id: base.id, version: base.version, status: base.status, params: JSON.parse(base.params) } : null,
    after: { materialId, version, status: 'draft', params, changeNote },
    reason,
    ip,
  });
  return id;
}

/** Creates a new draft version (copy of the latest version unless params are given). */
export async function createMethodVersion(
  db: Knex,
  actor: Actor,
  materialId: number,
  input: { params?: IdentityMethod; changeNote?: string },
  ip: string | null,
): Promise<MethodWithSignatures> {
  if (input.params) assertMethodValid(input.params);
  const id = await transactionWithRetry(db, async (trx) => {
    const mat = await trx('material').where({ id: materialId }).forUpdate().first();
    if (!mat) throw notFound('The material');
    const draft = await repo.draftMethodOf(trx, materialId);
    if (draft)
      throw conflict(`Version ${draft.version} of this method is still a draft; edit that draft instead.`, {
        draftId: draft.id,
      });
    const base = await repo.latestMethodOf(trx, materialId);
    const params =
      input.params ??
      (base ? (JSON.parse(base.params) as IdentityMethod) : defaultMethodFor(JSON.parse(mat.techniques)[0]));
    return insertDraftVersion(trx, actor, materialId, base, params, input.changeNote ?? null, 'new draft version', ip);
  });
  return methodWithSignatures(db, must(await repo.findMethod(db, id), `identity method ${id} just written`));
}

/** New draft from a given (usually approved) version, for POST /api/methods/:id/new-version. */
export async function newVersionFrom(
  db: Knex,
  actor: Actor,
  methodId: number,
  input: { params?: IdentityMethod; changeNote?: string },
  ip: string | null,
): Promise<MethodWithSignatures> {
  const m = await repo.findMethod(db, methodId);
  if (!m) throw notFound('The identity method');
  return createMethodVersion(
    db,
    actor,
    m.material_id,
    { params: input.params ?? (JSON.parse(m.params) as IdentityMethod), changeNote: input.changeNote },
    ip,
  );
}

export async function updateMethod(
  db: Knex,
  actor: Actor,
  methodId: number,
  patch: { params?: IdentityMethod; changeNote?: string; reason: string },
  ip: string | null,
): Promise<MethodWithSignatures> {
  if (patch.params) assertMethodValid(patch.params);
  const outcome = await transactionWithRetry(db, async (trx) => {
    const before = await trx('identity_method').where({ id: methodId }).forUpdate().first();
    if (!before) throw notFound('The identity method');
    await trx('material').where({ id: before.material_id }).forUpdate().first();
    if (before.status !== 'draft') {
      // Immutable: editing an approved version means a new draft version (created here).
      const draft = await repo.draftMethodOf(trx, before.material_id);
      if (draft)
        return {
          immutable: true as const,
          status: before.status,
          version: before.version,
          draftId: draft.id,
          created: false,
        };
      if (before.status === 'superseded')
        return {
          immutable: true as const,
          status: before.status,
          version: before.version,
          draftId: null,
          created: false,
        };
      const params = patch.params ?? (JSON.parse(before.params) as IdentityMethod);
      const newId = await insertDraftVersion(
        trx,
        actor,
        before.material_id,
        before,
        params,
        patch.changeNote ?? null,
        patch.reason,
        ip,
      );
      return {
        immutable: true as const,
        status: before.status,
        version: before.version,
        draftId: newId,
        created: true,
      };
    }
    const upd: Partial<IdentityMethodInsert> = { updated_at: new Date() };
    if (patch.params) {
      upd.params = JSON.stringify(patch.params);
      upd.technique = patch.params.technique;
    }
    if (patch.changeNote !== undefined) upd.change_note = patch.changeNote;
    await trx('identity_method').where({ id: methodId }).update(upd);
    const after = must(await repo.findMethod(trx, methodId), `identity method ${methodId} just updated`);
    await appendAudit(trx, {
      actor,
      action: 'method.updated',
      entityType: 'identity_method',
      entityId: methodId,
      before: repo.toMethod(before),
      after: repo.toMethod(after),
      reason: patch.reason,
      ip,
    });
    return { immutable: false as const };
  });
  if (outcome.immutable) {
    if (outcome.created)
      throw new AppError(
        409,
        'METHOD_IMMUTABLE',
        `Version ${outcome.version} is ${outcome.status} and cannot be changed. A new draft version was created with your changes; review and approve it.`,
        { newDraftId: outcome.draftId },
      );
    if (outcome.draftId)
      throw new AppError(
        409,
        'METHOD_IMMUTABLE',
        `Version ${outcome.version} is ${outcome.status} and cannot be changed. Edit the existing draft version instead.`,
        {
          draftId: outcome.draftId,
        },
      );
    throw new AppError(409, 'METHOD_IMMUTABLE', `Version ${outcome.version} is superseded and cannot be changed.`);
  }
  return methodWithSignatures(
    db,
    must(await repo.findMethod(db, methodId), `identity method ${methodId} just written`),
  );
}

/** The content an approval signature of a method covers (with what the approval signed beside it, docs/methods.md). */
export function methodSignedContent(
  m: repo.MethodRow,
  approval?: { validationSha256: string; firstReferenceIds: number[]; gateOverrideId: number | null } | null,
) {
  return {
    methodId: m.id,
    materialId: m.material_id,
    version: m.version,
    technique: m.technique,
    params: JSON.parse(m.params),
    ...(approval
      ? {
          validationRecordSha256: approval.validationSha256,
          firstReferenceIds: approval.firstReferenceIds,
          gateOverrideId: approval.gateOverrideId,
        }
      : {}),
  };
}

/** The method_approval row of a version, as the signed content and the API show it. */
export async function approvalOf(db: Knex | Knex.Transaction, methodId: number): Promise<MethodApprovalRecord | null> {
  const a = await db('method_approval').where({ method_id: methodId }).first();
  if (!a) return null;
  return {
    validationFileId: a.validation_file_id,
    validationSha256: a.validation_sha256,
    firstReferenceIds: JSON.parse(a.first_reference_ids) as number[],
    gateOverrideId: a.gate_override_id ?? null,
    gate: (JSON.parse(a.validation) as { gate: MethodGateReport }).gate,
  };
}

/** The version's own reference set for the gate: approved references, or for a first version the drafts approved with it. */
async function ownReferencesFor(
  db: Knex,
  user: AuthUser,
  m: repo.MethodRow,
  referenceIds: number[] | undefined,
): Promise<{ own: OwnReference[]; first: number[] }> {
  const approved = await db('reference_spectrum')
    .where({ material_id: m.material_id, status: 'approved' })
    .orderBy('id');
  let rows = approved;
  let first: number[] = [];
  if (approved.length) {
    if (referenceIds?.length)
      throw new AppError(
        422,
        'NOT_FIRST_VERSION',
        'This material has approved references already: only its first method version is approved together with references. Approve new references on their own page.',
      );
  } else {
    const drafts = await db('reference_spectrum').where({ material_id: m.material_id, status: 'draft' }).orderBy('id');
    rows = referenceIds ? drafts.filter((d) => referenceIds.includes(d.id)) : drafts;
    if (referenceIds && rows.length !== referenceIds.length)
      throw new AppError(
        422,
        'NOT_A_DRAFT_REFERENCE',
        'Every reference approved with the first version must be a draft reference of this material.',
      );
    if (rows.length === 0)
      throw new AppError(
        409,
        'FIRST_VERSION_NEEDS_REFERENCES',
        `Version ${m.version} is the first method version of this material and cannot be checked against references it does not have: upload its first reference spectra, then approve the version together with them.`,
      );
    const own = rows.find((r) => r.created_by === user.id);
    if (own)
      throw forbidden(
        `You uploaded reference ${own.code}, which would be approved with this version. Another QA manager must approve (segregation of duties).`,
      );
    first = rows.map((r) => r.id);
  }
  const out: OwnReference[] = [];
  for (const r of rows)
    out.push({
      id: r.id,
      code: r.code,
      spectrum: await spectrumOfFile(db, r.file_id),
      bands: repo.toReference(r).bands,
    });
  return { own: out, first };
}

/** The gate of a draft version, computed now (no signature): for the approval dialog and override requests. */
export async function previewMethodGate(
  db: Knex,
  user: AuthUser | null,
  methodId: number,
  referenceIds?: number[],
): Promise<MethodGateReport> {
  const m = await repo.findMethod(db, methodId);
  if (!m) throw notFound('The identity method');
  if (m.status !== 'draft') throw conflict(`Version ${m.version} is ${m.status}; the gate runs before approval.`);
  const params = JSON.parse(m.params) as IdentityMethod;
  assertMethodValid(params);
  const { own } = await ownReferencesFor(db, user ?? ({ id: -1 } as AuthUser), m, referenceIds);
  return gateOrRefuse(db, m, params, own);
}

async function gateOrRefuse(db: Knex, m: repo.MethodRow, params: IdentityMethod, own: OwnReference[]) {
  try {
    return await methodGate(
      db,
      { id: m.id, version: m.version, materialId: m.material_id, technique: m.technique, params },
      own,
    );
  } catch (e) {
    if (!(e instanceof SpectrumError)) throw e;
    throw conflict(
      `A reference of this material cannot be used under version ${m.version}: ${e.message} Retire it or change the method first.`,
    );
  }
}

export async function requestMethodOverride(
  db: Knex,
  user: AuthUser,
  methodId: number,
  input: GateOverrideRequest,
  ip: string | null,
) {
  const m = await repo.findMethod(db, methodId);
  if (!m) throw notFound('The identity method');
  if (m.status !== 'draft') throw conflict(`Version ${m.version} is already ${m.status}.`);
  await assertIrSuitable(db, m.material_id, 'No IR method can be approved');
  const gate = await previewMethodGate(db, user, methodId);
  return recordOverrideRequest(
    db,
    user,
    {
      entityType: 'identity_method',
      entityId: methodId,
      label: `method version ${m.version}`,
      gatePassed: gate.passed,
      gate,
      gateSha256: gateHash(gate),
      excluded: [{ userId: m.created_by, why: 'You wrote this method version.' }],
      justification: input.justification,
      changeControl: input.changeControl,
      signature: input.signature,
    },
    ip,
  );
}

export async function approveMethod(
  db: Knex,
  user: AuthUser,
  methodId: number,
  input: ApproveMethodInput,
  ip: string | null,
): Promise<MethodWithSignatures> {
  const signature = input.signature;
  const m = await repo.findMethod(db, methodId);
  if (!m) throw notFound('The identity method');
  if (m.status !== 'draft') throw conflict(`Version ${m.version} is already ${m.status}.`);
  if (m.created_by === user.id)
    throw forbidden(
      `You wrote version ${m.version} of this method. Another QA manager must approve it (segregation of duties: the author of a method version never approves it).`,
    );
  await assertIrSuitable(db, m.material_id, 'No IR method can be approved');
  const params = JSON.parse(m.params) as IdentityMethod;
  assertMethodValid(params);
  const { own, first } = await ownReferencesFor(db, user, m, input.referenceIds);
  // The reference set stays the set under the new version: each must still be preparable (e.g. cover
  // the range), and a reference-set model the version asks for must be buildable from it.
  for (const r of own) {
    try {
      prepare(r.spectrum, params);
    } catch (e) {
      if (!(e instanceof SpectrumError)) throw e;
      throw conflict(
        `Reference ${r.code} cannot be used under this method version: ${e.message} Retire it or change the method first.`,
        { referenceCode: r.code },
      );
    }
  }
  const model = checkReferenceModel(
    own.map((r) => ({ id: String(r.id), label: r.code, spectrum: r.spectrum, bands: toEngineBands(r.bands) })),
    params,
  );
  if (!model.buildable)
    throw new AppError(
      409,
      'REFERENCE_MODEL',
      `Version ${m.version} judges the whole reference set, but its model cannot be built: ${model.problems.join(' ')}`,
      { problems: model.problems },
    );
  await checkSignatureCredentials(db, {
    user,
    credentials: signature,
    meaning: 'approved',
    entityType: 'identity_method',
    entityId: methodId,
    ip,
  });
  const actor = { id: user.id, name: user.fullName };
  const gate = await gateOrRefuse(db, m, params, own);
  let overrideId: number | null = null;
  if (!gate.passed) {
    if (input.overrideId) {
      await checkOverride(db, user, input.overrideId, 'identity_method', methodId, gateHash(gate), [
        { userId: m.created_by, why: 'You wrote this method version.' },
      ]);
      overrideId = input.overrideId;
    } else {
      await auditNow(db, {
        actor,
        action: 'method.approval-blocked',
        entityType: 'identity_method',
        entityId: methodId,
        after: { offending: gate.offending },
        reason: 'specificity gate of the method version',
        ip,
      });
      throw new AppError(
        409,
        'SPECIFICITY_GATE',
        `Approval refused: under version ${m.version} ${gateSentence(gate.offending)}. Tighten the method, or have one QA manager request an override (justification and change control) and a second confirm it.`,
        gate,
      );
    }
  }
  // The validation record is assembled and printed before any lock is taken.
  const mat = must(await repo.findMaterial(db, m.material_id), `material ${m.material_id} of method ${m.id}`);
  const record = await assembleValidationRecord(db, {
    material: { id: mat.id, code: mat.code, name: mat.name, grade: mat.grade },
    method: { id: m.id, version: m.version, technique: m.technique, params },
    own,
    gate,
  });
  const pdf = await validationRecordPdf(record, user.fullName);
  const pdfSha = sha256Hex(pdf);
  await transactionWithRetry(db, async (trx) => {
    const row = await trx('identity_method').where({ id: methodId }).forUpdate().first();
    if (!row) throw notFound('The identity method');
    if (row.status !== 'draft') throw conflict(`Version ${row.version} was approved meanwhile by someone else.`);
    if (row.params !== m.params)
      throw conflict('The method version was changed while you were signing; review it and sign again.');
    const firstRows: repo.ReferenceRow[] = first.length
      ? await trx('reference_spectrum').whereIn('id', first).forUpdate().orderBy('id')
      : [];
    for (const r of firstRows)
      if (r.status !== 'draft') throw conflict(`Reference ${r.code} was ${r.status} meanwhile by someone else.`);
    const previous = await repo.approvedMethodOf(trx, row.material_id);
    const sig = await recordSignature(trx, {
      user,
      credentials: signature,
      meaning: 'approved',
      entityType: 'identity_method',
      entityId: methodId,
      content: methodSignedContent(row, {
        validationSha256: pdfSha,
        firstReferenceIds: first,
        gateOverrideId: overrideId,
      }),
      statement: overrideId ? `Approved under gate override ${overrideId}.` : null,
      ip,
    });
    const now = new Date();
    const { id: fileId } = await storeFile(
      trx,
      { originalname: `validation-record-${mat.code}-v${row.version}.pdf`, mimetype: 'application/pdf', buffer: pdf },
      user.id,
      now,
      pdfSha,
    );
    await trx('method_approval').insert({
      method_id: methodId,
      validation_file_id: fileId,
      validation_sha256: pdfSha,
      validation: JSON.stringify({ ...record, gate }),
      first_reference_ids: JSON.stringify(first),
      gate_override_id: overrideId,
      signature_id: sig.id,
      created_at: now,
    });
    if (overrideId)
      await confirmOverride(trx, actor, overrideId, sig.id, { type: 'identity_method', id: methodId }, ip);
    if (previous) {
      await trx('identity_method').where({ id: previous.id }).update({ status: 'superseded', updated_at: now });
      await appendAudit(trx, {
        actor,
        action: 'method.superseded',
        entityType: 'identity_method',
        entityId: previous.id,
        before: { status: 'approved' },
        after: { status: 'superseded', supersededBy: methodId },
        ip,
      });
    }
    await trx('identity_method')
      .where({ id: methodId })
      .update({ status: 'approved', approved_signature_id: sig.id, approved_at: now, updated_at: now });
    await appendAudit(trx, {
      actor,
      action: 'method.approved',
      entityType: 'identity_method',
      entityId: methodId,
      before: { status: 'draft' },
      after: {
        status: 'approved',
        signatureId: sig.id,
        version: row.version,
        validationRecord: { fileId, sha256: pdfSha },
        firstReferenceIds: first,
        gateOverrideId: overrideId,
        specificity: { passed: gate.passed, offending: gate.offending.length },
      },
      ip,
    });
    for (const r of firstRows) {
      const file = must(
        await trx('stored_file').where({ id: r.file_id }).select('sha256').first(),
        `stored file ${r.file_id} of reference ${r.code}`,
      );
      const rsig = await recordSignature(trx, {
        user,
        credentials: signature,
        meaning: 'approved',
        entityType: 'reference_spectrum',
        entityId: r.id,
        content: referenceSignedContent(r.id, file.sha256, repo.toReference(r).bands, methodId),
        statement: `Approved with the first method version (${row.version}).`,
        ip,
      });
      await trx('reference_spectrum').where({ id: r.id }).update({
        status: 'approved',
        approved_signature_id: rsig.id,
        approved_method_id: methodId,
        approved_at: now,
        updated_at: now,
      });
      await appendAudit(trx, {
        actor,
        action: 'reference.approved',
        entityType: 'reference_spectrum',
        entityId: r.id,
        before: { status: 'draft' },
        after: { status: 'approved', signatureId: rsig.id, methodId, withFirstMethodVersion: true },
        ip,
      });
    }
  });
  invalidateLibraryCache();
  return methodWithSignatures(
    db,
    must(await repo.findMethod(db, methodId), `identity method ${methodId} just written`),
  );
}

/** The validation record PDF of an approved version. */
export async function validationRecordFile(db: Knex, methodId: number) {
  const a = await approvalOf(db, methodId);
  if (!a) throw notFound('The validation record of this method version');
  const f = await repo.findStoredFile(db, a.validationFileId);
  if (!f) throw notFound('The stored file');
  return f;
}

export async function getMethod(db: Knex, id: number): Promise<MethodWithSignatures> {
  const m = await repo.findMethod(db, id);
  if (!m) throw notFound('The identity method');
  return methodWithSignatures(db, m);
}
