/** Data access of the reference library: materials, identity methods, reference spectra, stored files. */
import { oneOf, parseJson, type Db } from '../../lib/db';
import type {
  IdentityMethodInsert,
  IdentityMethodRow,
  MaterialInsert,
  MaterialRow,
  ReferenceSpectrumInsert,
  ReferenceSpectrumRow,
  StoredFileRow,
} from '../../lib/db-tables';
import type {
  GateReport,
  IdentityMethodInput,
  Material,
  MethodStatus,
  MethodVersion,
  ReferenceMeta,
  ReferenceStatus,
  ReferenceSummary,
  StoredBand,
} from './contract';
import { METHOD_STATUSES, REFERENCE_STATUSES } from './contract';

/** The stored status of a method version, checked against the values the API knows. */
function methodStatus(s: string): MethodStatus {
  return oneOf(METHOD_STATUSES, s, 'identity_method status');
}

/** The stored status of a reference, checked against the values the API knows. */
export function referenceStatus(s: string): ReferenceStatus {
  return oneOf(REFERENCE_STATUSES, s, 'reference_spectrum status');
}

export type { MaterialRow, StoredFileRow };
/** A version of a material's identity method (table identity_method). */
export type MethodRow = IdentityMethodRow;
/** A reference spectrum (table reference_spectrum). */
export type ReferenceRow = ReferenceSpectrumRow;

export function toMaterial(r: MaterialRow): Material {
  return {
    id: r.id,
    code: r.code,
    name: r.name,
    grade: r.grade,
    monographRef: r.monograph_ref,
    techniques: parseJson<string[]>(r.techniques, []),
    notes: r.notes,
    active: !!r.active,
    createdBy: r.created_by,
    createdAt: new Date(r.created_at).toISOString(),
    updatedAt: new Date(r.updated_at).toISOString(),
  };
}

export function toMethod(r: MethodRow): MethodVersion {
  return {
    id: r.id,
    materialId: r.material_id,
    version: r.version,
    status: methodStatus(r.status),
    technique: r.technique,
    params: parseJson<IdentityMethodInput>(r.params, null as unknown as IdentityMethodInput),
    changeNote: r.change_note,
    supersedesId: r.supersedes_id,
    createdBy: r.created_by,
    createdAt: new Date(r.created_at).toISOString(),
    updatedAt: new Date(r.updated_at).toISOString(),
    approvedSignatureId: r.approved_signature_id,
    approvedAt: r.approved_at ? new Date(r.approved_at).toISOString() : null,
  };
}

export function toReference(r: ReferenceRow): ReferenceSummary {
  return {
    id: r.id,
    materialId: r.material_id,
    code: r.code,
    status: referenceStatus(r.status),
    technique: r.technique,
    supplier: r.supplier,
    supplierLot: r.supplier_lot,
    measuredHow: r.measured_how,
    instrumentId: r.instrument_id,
    fileId: r.file_id,
    bands: parseJson<StoredBand[]>(r.bands, []),
    meta: parseJson<ReferenceMeta | null>(r.meta, null),
    specificity: parseJson<GateReport | null>(r.specificity, null),
    justification: r.justification,
    createdBy: r.created_by,
    createdAt: new Date(r.created_at).toISOString(),
    updatedAt: new Date(r.updated_at).toISOString(),
    approvedSignatureId: r.approved_signature_id,
    approvedMethodId: r.approved_method_id,
    approvedAt: r.approved_at ? new Date(r.approved_at).toISOString() : null,
    retiredSignatureId: r.retired_signature_id,
    retireReason: r.retire_reason,
  };
}

// ---- materials
export const findMaterial = async (db: Db, id: number): Promise<MaterialRow | undefined> =>
  db('material').where({ id }).first();
export const listMaterialRows = (db: Db): Promise<MaterialRow[]> => db('material').orderBy('code');
export async function insertMaterial(db: Db, row: MaterialInsert): Promise<number> {
  const [id] = await db('material').insert(row);
  return id;
}

// ---- methods
export const findMethod = async (db: Db, id: number): Promise<MethodRow | undefined> =>
  db('identity_method').where({ id }).first();
export const methodsOf = async (db: Db, materialId: number): Promise<MethodRow[]> =>
  db('identity_method').where({ material_id: materialId }).orderBy('version', 'desc');
export const approvedMethodOf = async (db: Db, materialId: number): Promise<MethodRow | undefined> =>
  db('identity_method').where({ material_id: materialId, status: 'approved' }).orderBy('version', 'desc').first();
export const draftMethodOf = async (db: Db, materialId: number): Promise<MethodRow | undefined> =>
  db('identity_method').where({ material_id: materialId, status: 'draft' }).orderBy('version', 'desc').first();
export const latestMethodOf = async (db: Db, materialId: number): Promise<MethodRow | undefined> =>
  db('identity_method').where({ material_id: materialId }).orderBy('version', 'desc').first();
export async function insertMethod(db: Db, row: IdentityMethodInsert): Promise<number> {
  const [id] = await db('identity_method').insert(row);
  return id;
}

// ---- references
export const findReference = async (db: Db, id: number): Promise<ReferenceRow | undefined> =>
  db('reference_spectrum').where({ id }).first();
export const referencesOf = async (db: Db, materialId: number): Promise<ReferenceRow[]> =>
  db('reference_spectrum').where({ material_id: materialId }).orderBy('id');
export async function insertReference(db: Db, row: ReferenceSpectrumInsert): Promise<number> {
  const [id] = await db('reference_spectrum').insert(row);
  return id;
}

// ---- stored files (append-only)
export const findStoredFile = async (db: Db, id: number): Promise<StoredFileRow | undefined> =>
  db('stored_file').where({ id }).first();
