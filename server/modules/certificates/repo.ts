/**
 * Data access of identity certificates. The content of a certificate is gathered here with
 * read-only queries straight from the tables of the other modules (lot, container, test,
 * measurement, method, reference, instrument, check, e-signature, stored file), so the
 * certificate module depends on the schema only, not on other modules' code. Certificates
 * themselves are only ever inserted (the table is append-only).
 */
import type { Knex } from 'knex';
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';
import type * as tables from '../../lib/db-tables';

/** A certificate without its PDF bytes (META_COLUMNS). */
export type CertificateRow = Omit<tables.CertificateRow, 'pdf'>;

/** Every column except the PDF bytes. */
export const META_COLUMNS = [
  'c.id',
  'c.number',
  'c.lot_id',
  'c.test_id',
  'c.supersedes_id',
  'c.sha256',
  'c.size',
  'c.signer_fingerprint',
  'c.issued_by',
  'c.issued_at',
  'c.content',
  'c.supersede_reason',
  'c.supersede_signature_id',
];

/** A certificate with its lot, material, neighbours in the supersession chain and issuer (listQuery). */
export type CertificateListRow = CertificateRow & {
  lot_number: string;
  material_id: number;
  material_code: string;
  material_name: string;
  superseded_by_id: number | null;
  superseded_by_number: string | null;
  supersedes_number: string | null;
  issued_by_name: string | null;
};

function listQuery(db: Db) {
  return db('certificate as c')
    .join('lot as l', 'l.id', 'c.lot_id')
    .join('material as m', 'm.id', 'l.material_id')
    .leftJoin('certificate as n', 'n.supersedes_id', 'c.id')
    .leftJoin('certificate as o', 'o.id', 'c.supersedes_id')
    .leftJoin('app_user as u', 'u.id', 'c.issued_by')
    .select<CertificateListRow[]>(
      ...META_COLUMNS,
      'l.lot_number',
      'l.material_id',
      'm.code as material_code',
      'm.name as material_name',
      'n.id as superseded_by_id',
      'n.number as superseded_by_number',
      'o.number as supersedes_number',
      'u.full_name as issued_by_name',
    );
}

export interface ListFilter {
  lot?: string;
  lotId?: number;
  material?: string;
  from?: Date;
  to?: Date;
  number?: string;
  limit: number;
  offset: number;
}

export async function listCertificates(db: Db, f: ListFilter): Promise<{ rows: CertificateListRow[]; total: number }> {
  const where = <Q extends Knex.QueryBuilder>(q: Q): Q => {
    if (f.lotId) q.where('c.lot_id', f.lotId);
    if (f.lot) q.where('l.lot_number', 'like', `%${escapeLike(f.lot)}%`);
    if (f.number) q.where('c.number', 'like', `%${escapeLike(f.number)}%`);
    if (f.material)
      q.where((w) =>
        w
          .where('m.code', 'like', `%${escapeLike(f.material!)}%`)
          .orWhere('m.name', 'like', `%${escapeLike(f.material!)}%`),
      );
    if (f.from) q.where('c.issued_at', '>=', f.from);
    if (f.to) q.where('c.issued_at', '<', f.to);
    return q;
  };
  const rows = await where(listQuery(db))
    .orderBy('c.issued_at', 'desc')
    .orderBy('c.id', 'desc')
    .limit(f.limit)
    .offset(f.offset);
  const countQ = db('certificate as c')
    .join('lot as l', 'l.id', 'c.lot_id')
    .join('material as m', 'm.id', 'l.material_id')
    .count({ n: '*' });
  const [{ n }] = await where(countQ);
  return { rows, total: Number(n) };
}

function escapeLike(s: string): string {
  return s.replace(/[\\%_]/g, (c) => `\\${c}`);
}

export async function findListRow(db: Db, id: number): Promise<CertificateListRow | undefined> {
  return listQuery(db).where('c.id', id).first();
}

export async function findByNumber(db: Db, number: string): Promise<CertificateListRow | undefined> {
  return listQuery(db).where('c.number', number).first();
}

export async function findIdsBySha(db: Db, sha: string): Promise<number[]> {
  return (await db('certificate').where({ sha256: sha }).select('id').orderBy('id')).map((r) => r.id);
}

export async function pdfBytes(db: Db, id: number): Promise<Buffer | undefined> {
  const r = await db('certificate').where({ id }).select('pdf').first();
  return r?.pdf;
}

/** Highest sequence used in a year, from numbers IC-YYYY-NNNNN. */
export async function lastSequence(db: Db, year: number): Promise<number> {
  // Longest first, then highest: stays right past 99999 (IC-2026-100000 sorts below IC-2026-99999 as text).
  const r = await db('certificate')
    .where('number', 'like', `IC-${year}-%`)
    .select('number')
    .orderByRaw('CHAR_LENGTH(number) DESC, number DESC')
    .first();
  const m = /^IC-\d{4}-(\d+)$/.exec(String(r?.number ?? ''));
  return m ? Number(m[1]) : 0;
}

export async function insertCertificate(db: Db, row: tables.CertificateInsert): Promise<number> {
  const [id] = await db('certificate').insert(row);
  return id;
}

// ---------------------------------------------------------------------------------------------
// Content gathering (read-only)
// ---------------------------------------------------------------------------------------------

export type LotRow = tables.LotRow;

export async function findLot(db: Db, id: number): Promise<LotRow | undefined> {
  return db('lot').where({ id }).first();
}

export async function lockLot(db: Db, id: number): Promise<LotRow | undefined> {
  return db('lot').where({ id }).forUpdate().first();
}

export async function setLotCertificate(db: Db, lotId: number, certificateId: number): Promise<void> {
  await db('lot').where({ id: lotId }).update({ certificate_id: certificateId, updated_at: new Date() });
}

export type MaterialRow = Pick<tables.MaterialRow, 'id' | 'code' | 'name' | 'grade' | 'monograph_ref'>;

export const findMaterial = (db: Db, id: number): Promise<MaterialRow | undefined> =>
  db('material').where({ id }).select('id', 'code', 'name', 'grade', 'monograph_ref').first();

export type ContainerRow = Pick<tables.ContainerRow, 'id' | 'seq' | 'label'>;

export const containersOf = (db: Db, lotId: number): Promise<ContainerRow[]> =>
  db('container').where({ lot_id: lotId }).select('id', 'seq', 'label').orderBy('seq');

export type TestRow = Pick<
  tables.IdentityTestRow,
  | 'id'
  | 'lot_id'
  | 'attempt'
  | 'status'
  | 'method_id'
  | 'instrument_id'
  | 'performed_signature_id'
  | 'verified_signature_id'
  | 'retest_of_investigation_id'
>;

export const testsOf = (db: Db, lotId: number): Promise<TestRow[]> =>
  db('identity_test')
    .where({ lot_id: lotId })
    .select(
      'id',
      'lot_id',
      'attempt',
      'status',
      'method_id',
      'instrument_id',
      'performed_signature_id',
      'verified_signature_id',
      'retest_of_investigation_id',
    )
    .orderBy('attempt');

/** Containers an attempt covers: null = all; a retest covers the containers QA authorised. */
export async function retestScope(db: Db, investigationId: number): Promise<number[] | null> {
  const r = await db('investigation').where({ id: investigationId }).select('retest_containers').first();
  if (!r) return null;
  const ids = parseJson<unknown>(r.retest_containers, null);
  return Array.isArray(ids) ? ids.map(Number) : null;
}

/** A measurement with the SHA-256 and name of its file. */
export type MeasurementRow = Pick<
  tables.MeasurementRow,
  | 'id'
  | 'test_id'
  | 'container_id'
  | 'file_id'
  | 'instrument_id'
  | 'instrument_check_id'
  | 'method_id'
  | 'reference_ids'
  | 'verdict'
  | 'match_score'
  | 'result'
  | 'engine_version'
  | 'created_at'
> &
  Pick<tables.StoredFileRow, 'file_name'> & { file_sha256: string };

export const measurementsOfTests = (db: Db, testIds: number[]): Promise<MeasurementRow[]> =>
  db('measurement as ms')
    .join('stored_file as f', 'f.id', 'ms.file_id')
    .whereIn('ms.test_id', testIds)
    .select<MeasurementRow[]>(
      'ms.id',
      'ms.test_id',
      'ms.container_id',
      'ms.file_id',
      'ms.instrument_id',
      'ms.instrument_check_id',
      'ms.method_id',
      'ms.reference_ids',
      'ms.verdict',
      'ms.match_score',
      'ms.result',
      'ms.engine_version',
      'ms.created_at',
      'f.sha256 as file_sha256',
      'f.file_name',
    )
    .orderBy('ms.id');

export type MethodRow = Pick<
  tables.IdentityMethodRow,
  'id' | 'material_id' | 'version' | 'status' | 'technique' | 'params' | 'approved_at' | 'approved_signature_id'
>;

export const methodsByIds = (db: Db, ids: number[]): Promise<MethodRow[]> =>
  db('identity_method')
    .whereIn('id', ids)
    .select('id', 'material_id', 'version', 'status', 'technique', 'params', 'approved_at', 'approved_signature_id')
    .orderBy('id');

export type ReferenceRow = Pick<
  tables.ReferenceSpectrumRow,
  | 'id'
  | 'code'
  | 'material_id'
  | 'file_id'
  | 'status'
  | 'technique'
  | 'supplier'
  | 'supplier_lot'
  | 'approved_at'
  | 'approved_signature_id'
>;

export const referencesByIds = (db: Db, ids: number[]): Promise<ReferenceRow[]> =>
  db('reference_spectrum')
    .whereIn('id', ids)
    .select(
      'id',
      'code',
      'material_id',
      'file_id',
      'status',
      'technique',
      'supplier',
      'supplier_lot',
      'approved_at',
      'approved_signature_id',
    )
    .orderBy('code');

export type InstrumentRow = Pick<
  tables.InstrumentRow,
  'id' | 'name' | 'serial_number' | 'technique' | 'sampling' | 'location'
>;

export const instrumentsByIds = (db: Db, ids: number[]): Promise<InstrumentRow[]> =>
  db('instrument')
    .whereIn('id', ids)
    .select('id', 'name', 'serial_number', 'technique', 'sampling', 'location')
    .orderBy('name');

/** An instrument check with who performed it and its specification's kind and version (left joins). */
export type CheckRow = Pick<
  tables.InstrumentCheckRow,
  'id' | 'instrument_id' | 'verdict' | 'performed_at' | 'valid_until' | 'signature_id'
> & { performed_by_name: string | null; spec_kind: string | null; spec_version: number | null };

export const checksByIds = (db: Db, ids: number[]): Promise<CheckRow[]> =>
  db('instrument_check as k')
    .leftJoin('app_user as u', 'u.id', 'k.performed_by')
    .leftJoin('instrument_check_spec as s', 's.id', 'k.spec_id')
    .whereIn('k.id', ids)
    .select<CheckRow[]>(
      'k.id',
      'k.instrument_id',
      'k.verdict',
      'k.performed_at',
      'k.valid_until',
      'k.signature_id',
      'u.full_name as performed_by_name',
      's.kind as spec_kind',
      's.version as spec_version',
    )
    .orderBy('k.id');

export type SignatureRow = Pick<tables.ESignatureRow, 'id' | 'printed_name' | 'meaning' | 'signed_at' | 'statement'>;

export async function signaturesByIds(db: Db, ids: number[]): Promise<Map<number, SignatureRow>> {
  if (ids.length === 0) return new Map();
  const rows = await db('e_signature')
    .whereIn('id', ids)
    .select('id', 'printed_name', 'meaning', 'signed_at', 'statement');
  return new Map(rows.map((r) => [r.id, r]));
}

export async function fileBytes(db: Db, id: number): Promise<{ data: Buffer; file_name: string } | undefined> {
  return db('stored_file').where({ id }).select('data', 'file_name').first();
}
