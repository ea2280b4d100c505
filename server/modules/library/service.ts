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
import { appendAudit, type Actor } from '../../lib/audit';
import type { SignatureInput } from '../../lib/contract';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { AppError, conflict, notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import {
  defaultMidIrAtrMethod,
  defaultNirMethod,
  type IdentityMethod,
  prepare,
  SpectrumError,
  validateMethod,
} from '../../spectra';
import { spectrumOfFile } from './engine';
import { invalidateLibraryCache } from './approved-set';
import * as repo from './repo';
import type {
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
  const methods: repo.MethodRow[] = await db('identity_method').whereIn('status', ['approved', 'draft']);
  const counts: { material_id: number; status: string; n: number }[] = await db('reference_spectrum')
    .select('material_id', 'status')
    .count({ n: '*' })
    .groupBy('material_id', 'status');
  return mats.map((m) => {
    const approved = methods
      .filter((x) => x.material_id === m.id && x.status === 'approved')
      .sort((a, b) => b.version - a.version)[0];
    const draft = methods.find((x) => x.material_id === m.id && x.status === 'draft');
    const c = (s: string) => Number(counts.find((x) => x.material_id === m.id && x.status === s)?.n ?? 0);
    return {
      ...repo.toMaterial(m),
      approvedMethod: approved ? { id: approved.id, version: approved.version, technique: approved.technique } : null,
      draftMethodId: draft?.id ?? null,
      references: { draft: c('draft'), approved: c('approved'), retired: c('retired') },
    };
  });
}

export async function methodWithSignatures(db: Knex, row: repo.MethodRow): Promise<MethodWithSignatures> {
  return { ...repo.toMethod(row), signatures: await signaturesFor(db, 'identity_method', row.id) };
}

export async function getMaterial(db: Knex, id: number): Promise<MaterialDetail> {
  const m = await repo.findMaterial(db, id);
  if (!m) throw notFound('The material');
  const methods = await repo.methodsOf(db, id);
  return {
    ...repo.toMaterial(m),
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
    const mat = repo.toMaterial((await repo.findMaterial(trx, id))!);
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
    const upd: Record<string, unknown> = { updated_at: new Date() };
    if (patch.name !== undefined) upd.name = patch.name;
    if (patch.grade !== undefined) upd.grade = patch.grade;
    if (patch.monographRef !== undefined) upd.monograph_ref = patch.monographRef;
    if (patch.techniques !== undefined) upd.techniques = JSON.stringify(patch.techniques);
    if (patch.notes !== undefined) upd.notes = patch.notes;
    if (patch.active !== undefined) upd.active = patch.active ? 1 : 0;
    await trx('material').where({ id }).update(upd);
    const after = (await repo.findMaterial(trx, id))!;
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
  return methodWithSignatures(db, (await repo.findMethod(db, id))!);
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
    const upd: Record<string, unknown> = { updated_at: new Date() };
    if (patch.params) {
      upd.params = JSON.stringify(patch.params);
      upd.technique = patch.params.technique;
    }
    if (patch.changeNote !== undefined) upd.change_note = patch.changeNote;
    await trx('identity_method').where({ id: methodId }).update(upd);
    const after = (await repo.findMethod(trx, methodId))!;
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
  return methodWithSignatures(db, (await repo.findMethod(db, methodId))!);
}

/** The content an approval signature of a method covers. */
export function methodSignedContent(m: repo.MethodRow) {
  return {
    methodId: m.id,
    materialId: m.material_id,
    version: m.version,
    technique: m.technique,
    params: JSON.parse(m.params),
  };
}

export async function approveMethod(
  db: Knex,
  user: AuthUser,
  methodId: number,
  signature: SignatureInput,
  ip: string | null,
): Promise<MethodWithSignatures> {
  const m = await repo.findMethod(db, methodId);
  if (!m) throw notFound('The identity method');
  if (m.status !== 'draft') throw conflict(`Version ${m.version} is already ${m.status}.`);
  const params = JSON.parse(m.params) as IdentityMethod;
  assertMethodValid(params);
  // The grade's approved references stay its reference set under the new version: each must
  // still be preparable (e.g. cover the range), or tests would fail for a reason that is not the sample's.
  for (const r of await db('reference_spectrum').where({ material_id: m.material_id, status: 'approved' })) {
    try {
      prepare(await spectrumOfFile(db, r.file_id), params);
    } catch (e) {
      if (!(e instanceof SpectrumError)) throw e;
      throw conflict(
        `Approved reference ${r.code} cannot be used under this method version: ${e.message} Retire it or change the method first.`,
        { referenceId: r.id },
      );
    }
  }
  await checkSignatureCredentials(db, {
    user,
    credentials: signature,
    meaning: 'approved',
    entityType: 'identity_method',
    entityId: methodId,
    ip,
  });
  const actor = { id: user.id, name: user.fullName };
  await transactionWithRetry(db, async (trx) => {
    const row = await trx('identity_method').where({ id: methodId }).forUpdate().first();
    if (row.status !== 'draft') throw conflict(`Version ${row.version} was approved meanwhile by someone else.`);
    const previous = await repo.approvedMethodOf(trx, row.material_id);
    const sig = await recordSignature(trx, {
      user,
      credentials: signature,
      meaning: 'approved',
      entityType: 'identity_method',
      entityId: methodId,
      content: methodSignedContent(row),
      ip,
    });
    const now = new Date();
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
      after: { status: 'approved', signatureId: sig.id, version: row.version },
      ip,
    });
  });
  invalidateLibraryCache();
  return methodWithSignatures(db, (await repo.findMethod(db, methodId))!);
}

export async function getMethod(db: Knex, id: number): Promise<MethodWithSignatures> {
  const m = await repo.findMethod(db, id);
  if (!m) throw notFound('The identity method');
  return methodWithSignatures(db, m);
}
