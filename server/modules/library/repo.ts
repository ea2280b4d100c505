/** Data access of the reference library: materials, identity methods, reference spectra, stored files. */
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
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

export interface MaterialRow {
  id: number;
  code: string;
  name: string;
  grade: string;
  monograph_ref: string;
  techniques: string;
  notes: string | null;
  active: number;
  created_by: number;
  created_at: Date;
  updated_at: Date;
}

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

export interface MethodRow {
  id: number;
  material_id: number;
  version: number;
  status: MethodStatus;
  technique: string;
  params: string;
  change_note: string | null;
  supersedes_id: number | null;
  created_by: number;
  created_at: Date;
  updated_at: Date;
  approved_signature_id: number | null;
  approved_at: Date | null;
}

export function toMethod(r: MethodRow): MethodVersion {
  return {
    id: r.id,
    materialId: r.material_id,
    version: r.version,
    status: r.status,
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

export interface ReferenceRow {
  id: number;
  material_id: number;
  code: string;
  file_id: number;
  status: ReferenceStatus;
  technique: string;
  supplier: string;
  supplier_lot: string;
  measured_how: string | null;
  instrument_id: number | null;
  bands: string;
  meta: string | null;
  specificity: string | null;
  justification: string | null;
  created_by: number;
  created_at: Date;
  updated_at: Date;
  approved_signature_id: number | null;
  approved_method_id: number | null;
  approved_at: Date | null;
  retired_signature_id: number | null;
  retire_reason: string | null;
}

export function toReference(r: ReferenceRow): ReferenceSummary {
  return {
    id: r.id,
    materialId: r.material_id,
    code: r.code,
    status: r.status,
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

export interface StoredFileRow {
  id: number;
  sha256: string;
  file_name: string;
  media_type: string;
  size: number;
  data: Buffer;
  uploaded_by: number | null;
  uploaded_at: Date;
}

// ---- materials
export const findMaterial = (db: Db, id: number): Promise<MaterialRow | undefined> =>
  db('material').where({ id }).first();
export const listMaterialRows = (db: Db): Promise<MaterialRow[]> => db('material').orderBy('code');
export async function insertMaterial(db: Db, row: Omit<MaterialRow, 'id'>): Promise<number> {
  const [id] = await db('material').insert(row);
  return id as number;
}

// ---- methods
export const findMethod = (db: Db, id: number): Promise<MethodRow | undefined> =>
  db('identity_method').where({ id }).first();
export const methodsOf = (db: Db, materialId: number): Promise<MethodRow[]> =>
  db('identity_method').where({ material_id: materialId }).orderBy('version', 'desc');
export const approvedMethodOf = (db: Db, materialId: number): Promise<MethodRow | undefined> =>
  db('identity_method').where({ material_id: materialId, status: 'approved' }).orderBy('version', 'desc').first();
export const draftMethodOf = (db: Db, materialId: number): Promise<MethodRow | undefined> =>
  db('identity_method').where({ material_id: materialId, status: 'draft' }).orderBy('version', 'desc').first();
export const latestMethodOf = (db: Db, materialId: number): Promise<MethodRow | undefined> =>
  db('identity_method').where({ material_id: materialId }).orderBy('version', 'desc').first();
export async function insertMethod(db: Db, row: Omit<MethodRow, 'id'>): Promise<number> {
  const [id] = await db('identity_method').insert(row);
  return id as number;
}

// ---- references
export const findReference = (db: Db, id: number): Promise<ReferenceRow | undefined> =>
  db('reference_spectrum').where({ id }).first();
export const referencesOf = (db: Db, materialId: number): Promise<ReferenceRow[]> =>
  db('reference_spectrum').where({ material_id: materialId }).orderBy('id');
export async function insertReference(db: Db, row: Omit<ReferenceRow, 'id'>): Promise<number> {
  const [id] = await db('reference_spectrum').insert(row);
  return id as number;
}

// ---- stored files (append-only)
export const findStoredFile = (db: Db, id: number): Promise<StoredFileRow | undefined> =>
  db('stored_file').where({ id }).first();
