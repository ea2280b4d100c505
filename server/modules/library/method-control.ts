/**
 * Method control (docs/methods.md):
 * - "identity by IR not suitable": QA's signed decision on a material, with the test that replaces
 *   IR; the latest decision is in force. While a material is marked not suitable, no IR method is
 *   approved for it (service and a database trigger), no lot of it starts IR testing and no IR
 *   identity certificate is issued for it (assertIrSuitable, called by those paths).
 * - Overrides of the specificity gate: a written justification, a change-control reference and the
 *   signatures of two different QA managers, neither the author of the method version nor the
 *   uploader of the reference. The first requests and signs (recordOverrideRequest); the second
 *   confirms by approving with the request's id (checkOverride, confirmOverride). Rows are
 *   append-only and the database refuses a confirmation by the requester.
 */
import type { Knex } from 'knex';
import { must } from '../../lib/db';
import { appendAudit, type Actor } from '../../lib/audit';
import type { SignatureInput } from '../../lib/contract';
import type { GateOverrideRow, MaterialIrSuitabilityRow } from '../../lib/db-tables';
import { checkSignatureCredentials, recordSignature } from '../../lib/esign';
import { AppError, conflict, forbidden, notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { invalidateLibraryCache } from './approved-set';
import type { GateOverride, IrSuitability, IrSuitabilityInput } from './contract';
import { transactionWithRetry } from '../../lib/retry';

type Db = Knex | Knex.Transaction;

/** A decision with the name of who took it (join with app_user). */
type SuitabilityRow = MaterialIrSuitabilityRow & { full_name: string };

function toSuitability(r: SuitabilityRow): IrSuitability {
  return {
    suitable: !!r.suitable,
    replacementTest: r.replacement_test,
    reason: r.reason,
    decidedByName: r.full_name,
    decidedAt: new Date(r.decided_at).toISOString(),
    signatureId: r.signature_id,
  };
}

/** Latest IR decision per material (absent: none taken). */
export async function irSuitabilityMap(db: Db, materialIds?: number[]): Promise<Map<number, IrSuitability>> {
  let q = db('material_ir_suitability as d')
    .join('app_user as u', 'u.id', 'd.decided_by')
    .whereIn('d.id', function () {
      this.from('material_ir_suitability').max('id').groupBy('material_id');
    })
    .select<SuitabilityRow[]>('d.*', 'u.full_name');
  if (materialIds) q = q.whereIn('d.material_id', materialIds.length ? materialIds : [0]);
  const rows = await q;
  return new Map(rows.map((r) => [r.material_id, toSuitability(r)]));
}

export async function irSuitabilityOf(db: Db, materialId: number): Promise<IrSuitability | null> {
  return (await irSuitabilityMap(db, [materialId])).get(materialId) ?? null;
}

/** Refuses (409 IR_NOT_SUITABLE) when QA marked the material "identity by IR not suitable". */
export async function assertIrSuitable(db: Db, materialId: number, what: string): Promise<void> {
  const d = await irSuitabilityOf(db, materialId);
  if (d && !d.suitable) {
    const m = await db('material').where({ id: materialId }).first('code', 'name');
    throw new AppError(
      409,
      'IR_NOT_SUITABLE',
      `${what}: QA marked ${m?.code ?? 'this material'} ${m?.name ?? ''} "identity by IR not suitable". Its identity is tested by: ${d.replacementTest}.`.replace(
        /\s+/g,
        ' ',
      ),
      { materialId },
    );
  }
}

export async function decideIrSuitability(
  db: Knex,
  user: AuthUser,
  materialId: number,
  input: IrSuitabilityInput,
  ip: string | null,
): Promise<IrSuitability> {
  const mat = await db('material').where({ id: materialId }).first();
  if (!mat) throw notFound('The material');
  const current = await irSuitabilityOf(db, materialId);
  if ((current?.suitable ?? true) === input.suitable)
    throw conflict(
      input.suitable
        ? `${mat.code} is not marked "identity by IR not suitable"; nothing to change.`
        : `${mat.code} is already marked "identity by IR not suitable".`,
    );
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'ir-suitability-decided',
    entityType: 'material',
    entityId: materialId,
    ip,
  });
  const replacementTest = input.suitable ? null : (input.replacementTest ?? '').trim();
  await transactionWithRetry(db, async (trx) => {
    await trx('material').where({ id: materialId }).forUpdate().first();
    const now = new Date();
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'ir-suitability-decided',
      entityType: 'material',
      entityId: materialId,
      content: irSuitabilitySignedContent(materialId, input.suitable, replacementTest, input.reason),
      statement: input.reason,
      ip,
    });
    await trx('material_ir_suitability').insert({
      material_id: materialId,
      suitable: input.suitable ? 1 : 0,
      replacement_test: replacementTest,
      reason: input.reason,
      decided_by: user.id,
      signature_id: sig.id,
      decided_at: now,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: input.suitable ? 'material.ir-suitable' : 'material.ir-not-suitable',
      entityType: 'material',
      entityId: materialId,
      before: { irSuitable: current?.suitable ?? true },
      after: { irSuitable: input.suitable, replacementTest, signatureId: sig.id },
      reason: input.reason,
      ip,
    });
  });
  invalidateLibraryCache();
  return (await irSuitabilityOf(db, materialId))!;
}

export function irSuitabilitySignedContent(
  materialId: number,
  suitable: boolean,
  replacementTest: string | null,
  reason: string,
) {
  return { materialId, irSuitable: suitable, replacementTest, reason };
}

// ------------------------------------------------------------------ gate overrides

type Entity = 'identity_method' | 'reference_spectrum';

export async function overridesOf(db: Db, entityType: Entity, entityId: number): Promise<GateOverride[]> {
  const rows = await db('gate_override as o')
    .join('app_user as u', 'u.id', 'o.requested_by')
    .leftJoin('gate_override_confirmation as c', 'c.override_id', 'o.id')
    .leftJoin('app_user as cu', 'cu.id', 'c.confirmed_by')
    .where({ 'o.entity_type': entityType, 'o.entity_id': entityId })
    .select<(GateOverrideRow & { req_name: string; conf_name: string | null; confirmed_at: Date | null })[]>(
      'o.*',
      'u.full_name as req_name',
      'cu.full_name as conf_name',
      'c.confirmed_at',
    )
    .orderBy('o.id');
  return rows.map((r) => ({
    id: r.id,
    entityType, // the rows were selected by it
    entityId: r.entity_id,
    justification: r.justification,
    changeControl: r.change_control,
    requestedBy: r.requested_by,
    requestedByName: r.req_name,
    requestedAt: new Date(r.requested_at).toISOString(),
    confirmedByName: r.conf_name ?? null,
    confirmedAt: r.confirmed_at ? new Date(r.confirmed_at).toISOString() : null,
  }));
}

export function overrideSignedContent(o: {
  entityType: Entity;
  entityId: number;
  justification: string;
  changeControl: string;
  gateSha256: string;
}) {
  return o;
}

/**
 * The first signature of an override: the gate must refuse now, the requester is neither the
 * author nor the uploader (`excluded`), and no request for the same gate result awaits confirmation.
 */
export async function recordOverrideRequest(
  db: Knex,
  user: AuthUser,
  r: {
    entityType: Entity;
    entityId: number;
    label: string;
    gatePassed: boolean;
    gate: unknown;
    gateSha256: string;
    excluded: { userId: number; why: string }[];
    justification: string;
    changeControl: string;
    signature: SignatureInput;
  },
  ip: string | null,
): Promise<GateOverride> {
  for (const x of r.excluded)
    if (x.userId === user.id)
      throw forbidden(`${x.why} An override is requested and confirmed by two other QA managers (four eyes).`);
  if (r.gatePassed) throw conflict(`The specificity gate passes for ${r.label}; no override is needed. Approve it.`);
  const open = (await overridesOf(db, r.entityType, r.entityId)).find((o) => !o.confirmedAt);
  const openRow = open ? await db('gate_override').where({ id: open.id }).first('gate_sha256') : null;
  if (open && openRow?.gate_sha256 === r.gateSha256)
    throw conflict(
      `An override of the same gate result for ${r.label} awaits confirmation (requested by ${open.requestedByName}); a second QA manager confirms it by approving.`,
      { overrideId: open.id },
    );
  await checkSignatureCredentials(db, {
    user,
    credentials: r.signature,
    meaning: 'gate-override-requested',
    entityType: r.entityType,
    entityId: r.entityId,
    ip,
  });
  const id = await transactionWithRetry(db, async (trx) => {
    const now = new Date();
    const content = overrideSignedContent({
      entityType: r.entityType,
      entityId: r.entityId,
      justification: r.justification,
      changeControl: r.changeControl,
      gateSha256: r.gateSha256,
    });
    const sig = await recordSignature(trx, {
      user,
      credentials: r.signature,
      meaning: 'gate-override-requested',
      entityType: r.entityType,
      entityId: r.entityId,
      content,
      statement: r.justification,
      ip,
    });
    const [oid] = await trx('gate_override').insert({
      entity_type: r.entityType,
      entity_id: r.entityId,
      justification: r.justification,
      change_control: r.changeControl,
      gate_sha256: r.gateSha256,
      gate: JSON.stringify(r.gate),
      requested_by: user.id,
      signature_id: sig.id,
      requested_at: now,
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'gate-override.requested',
      entityType: r.entityType,
      entityId: r.entityId,
      after: { overrideId: oid, changeControl: r.changeControl, gateSha256: r.gateSha256, signatureId: sig.id },
      reason: r.justification,
      ip,
    });
    return oid;
  });
  return must(
    (await overridesOf(db, r.entityType, r.entityId)).find((o) => o.id === id),
    `gate override ${id} just requested`,
  );
}

/**
 * Checks that an override may be confirmed by `user` for this record and gate result; returns it.
 * The confirmer is not the requester, nor in `excluded`.
 */
export async function checkOverride(
  db: Db,
  user: AuthUser,
  overrideId: number,
  entityType: Entity,
  entityId: number,
  gateSha256: string,
  excluded: { userId: number; why: string }[],
): Promise<GateOverrideRow> {
  const o = await db('gate_override').where({ id: overrideId }).first();
  if (!o || o.entity_type !== entityType || o.entity_id !== entityId)
    throw new AppError(422, 'OVERRIDE_UNKNOWN', `Override request ${overrideId} does not belong to this record.`);
  if (await db('gate_override_confirmation').where({ override_id: overrideId }).first())
    throw conflict(`Override request ${overrideId} has already been confirmed.`);
  if (o.requested_by === user.id)
    throw forbidden(
      'You requested this override. A second, different QA manager must confirm it (two signatures, four eyes).',
    );
  for (const x of excluded)
    if (x.userId === user.id)
      throw forbidden(`${x.why} An override is requested and confirmed by two other QA managers (four eyes).`);
  if (o.gate_sha256 !== gateSha256)
    throw conflict(
      'The specificity gate gives another result than when the override was requested (the library changed). Request the override again.',
    );
  return o;
}

export async function confirmOverride(
  trx: Knex.Transaction,
  actor: Actor & { id: number },
  overrideId: number,
  signatureId: number,
  entity: { type: Entity; id: number },
  ip: string | null,
): Promise<void> {
  await trx('gate_override_confirmation').insert({
    override_id: overrideId,
    confirmed_by: actor.id,
    signature_id: signatureId,
    confirmed_at: new Date(),
  });
  await appendAudit(trx, {
    actor,
    action: 'gate-override.confirmed',
    entityType: entity.type,
    entityId: entity.id,
    after: { overrideId, signatureId },
    ip,
  });
}
