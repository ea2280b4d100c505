/**
 * Material master for disposition (issue 14 item 2): QA's versioned, signed profile of a material.
 * The "IR not suitable" flag of a material is QA's signed decision of the identity-method work
 * (material_ir_suitability, read through the library module); where it is set, the profile must name the identity test that replaces IR, and release
 * then asks for that test's recorded result instead of an identity certificate.
 */
import type { Knex } from 'knex';
import { appendAudit } from '../../lib/audit';
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import { checkSignatureCredentials, recordSignature, signaturesFor } from '../../lib/esign';
import { AppError, notFound } from '../../lib/errors';
import type { AuthUser } from '../../lib/http';
import { irSuitabilityOf } from '../library';
import type { AppUserRow, MaterialProfileRow } from '../../lib/db-tables';
import { oneOf } from '../../lib/db';
import {
  RISK_CLASSES,
  type CheckDef,
  type MaterialProfile,
  type MaterialProfileView,
  type ProfileInput,
} from './contract';
import { transactionWithRetry } from '../../lib/retry';

/** A material row with `ir_not_suitable` set from QA's latest IR-suitability decision. */
export async function materialWithIr(db: Db, materialId: number) {
  const m = await db('material').where({ id: materialId }).first();
  if (!m) return undefined;
  const d = await irSuitabilityOf(db, materialId);
  return { ...m, ir_not_suitable: !!d && !d.suitable };
}

/** The material's "IR not suitable" flag, on a row read by materialWithIr (absent = IR suitable). */
export function irNotSuitable(material: { ir_not_suitable?: boolean }): boolean {
  return Boolean(material.ir_not_suitable);
}

async function toProfile(db: Db, r: MaterialProfileRow, names: Map<number, string>): Promise<MaterialProfile> {
  const sigs = await signaturesFor(db, 'material', r.material_id);
  return {
    id: r.id,
    materialId: r.material_id,
    version: r.version,
    retestMonths: r.retest_months,
    shelfLifeMonths: r.shelf_life_months,
    riskClass: oneOf(RISK_CLASSES, r.risk_class, `material profile ${r.id} risk class`),
    checks: parseJson<CheckDef[]>(r.checks, []),
    reason: r.reason,
    createdBy: { id: r.created_by, name: names.get(r.created_by) ?? '' },
    createdAt: new Date(r.created_at).toISOString(),
    signature: sigs.find((s) => s.id === r.signature_id) ?? null,
  };
}

/** The current (newest) profile of a material, or null. */
export async function currentProfile(db: Db, materialId: number): Promise<MaterialProfile | null> {
  const r = await db('material_profile').where({ material_id: materialId }).orderBy('version', 'desc').first();
  if (!r) return null;
  const u = await db('app_user').where({ id: r.created_by }).first('full_name');
  return toProfile(db, r, new Map([[r.created_by, u?.full_name ?? '']]));
}

export async function profileView(db: Db, materialId: number): Promise<MaterialProfileView> {
  const m = await materialWithIr(db, materialId);
  if (!m) throw notFound('The material');
  const rows = await db('material_profile as p')
    .join('app_user as u', 'u.id', 'p.created_by')
    .where('p.material_id', materialId)
    .orderBy('p.version')
    .select<(MaterialProfileRow & { u_name: AppUserRow['full_name'] })[]>('p.*', 'u.full_name as u_name');
  const names = new Map(rows.map((r) => [r.created_by, r.u_name]));
  const history: MaterialProfile[] = [];
  for (const r of rows) history.push(await toProfile(db, r, names));
  return {
    material: { id: m.id, code: m.code, name: m.name, irNotSuitable: irNotSuitable(m) },
    current: history.at(-1) ?? null,
    history,
  };
}

export async function listProfiles(db: Db): Promise<MaterialProfileView[]> {
  const ids = (await db('material').where({ active: 1 }).orderBy('name').select('id')).map((r) => r.id);
  const out: MaterialProfileView[] = [];
  for (const id of ids) out.push(await profileView(db, id));
  return out;
}

export async function saveProfile(
  db: Knex,
  user: AuthUser,
  materialId: number,
  input: ProfileInput,
  ip: string | null,
): Promise<MaterialProfileView> {
  const m = await materialWithIr(db, materialId);
  if (!m) throw notFound('The material');
  if (irNotSuitable(m) && !input.checks.some((c) => c.kind === 'alternative-identity'))
    throw new AppError(
      422,
      'IDENTITY_TEST_MISSING',
      `${m.name} is flagged "IR not suitable": name the identity test that replaces IR (a check of the kind "alternative identity").`,
    );
  await checkSignatureCredentials(db, {
    user,
    credentials: input.signature,
    meaning: 'material-profile-approved',
    entityType: 'material',
    entityId: materialId,
    ip,
  });
  await transactionWithRetry(db, async (trx) => {
    const previous = await trx('material_profile')
      .where({ material_id: materialId })
      .orderBy('version', 'desc')
      .first();
    const version = Number(previous?.version ?? 0) + 1;
    const content = {
      material: m.code,
      version,
      retestMonths: input.retestMonths,
      shelfLifeMonths: input.shelfLifeMonths,
      riskClass: input.riskClass,
      checks: input.checks,
    };
    // Signed on the material (the profile row is append-only and carries its signature's id).
    const sig = await recordSignature(trx, {
      user,
      credentials: input.signature,
      meaning: 'material-profile-approved',
      entityType: 'material',
      entityId: materialId,
      content,
      statement: input.reason,
      ip,
    });
    const [id] = await trx('material_profile').insert({
      material_id: materialId,
      version,
      retest_months: input.retestMonths,
      shelf_life_months: input.shelfLifeMonths,
      risk_class: input.riskClass,
      checks: JSON.stringify(input.checks),
      reason: input.reason,
      signature_id: sig.id,
      created_by: user.id,
      created_at: new Date(),
    });
    await appendAudit(trx, {
      actor: { id: user.id, name: user.fullName },
      action: 'material.profile-approved',
      entityType: 'material',
      entityId: materialId,
      before: previous
        ? {
            version: previous.version,
            retestMonths: previous.retest_months,
            shelfLifeMonths: previous.shelf_life_months,
            riskClass: previous.risk_class,
            checks: parseJson(previous.checks, []),
          }
        : null,
      after: { ...content, profileId: id },
      reason: input.reason,
      ip,
    });
  });
  return profileView(db, materialId);
}
