/**
 * Data access of identity certificates. The content of a certificate is gathered here with
 * read-only queries straight from the tables of the other modules (lot, container, test,
 * measurement, method, reference, instrument, check, e-signature, stored file), so the
 * certificate module depends on the schema only, not on other modules' code. Certificates
 * themselves are only ever inserted (the table is append-only).
 */
import type { Db } from '../../lib/db';
import { parseJson } from '../../lib/db';

export interface CertificateRow {
  id: number;
  number: string;
  lot_id: number;
  test_id: number;
  supersedes_id: number | null;
  sha256: string;
  size: number;
  pdf?: Buffer;
  signer_fingerprint: string;
  issued_by: number | null;
  issued_at: Date;
  content: string | null;
  supersede_reason: string | null;
  supersede_signature_id: number | null;
}

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

export interface CertificateListRow extends CertificateRow {
  lot_number: string;
  material_id: number;
  material_code: string;
  material_name: string;
  superseded_by_id: number | null;
  superseded_by_number: string | null;
  supersedes_number: string | null;
  issued_by_name: string | null;
}

function listQuery(db: Db) {
  return db('certificate as c')
    .join('lot as l', 'l.id', 'c.lot_id')
    .join('material as m', 'm.id', 'l.material_id')
    .leftJoin('certificate as n', 'n.supersedes_id', 'c.id')
    .leftJoin('certificate as o', 'o.id', 'c.supersedes_id')
    .leftJoin('app_user as u', 'u.id', 'c.issued_by')
    .select(
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
  const where = (q: ReturnType<typeof listQuery>) => {
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
  const rows = (await where(listQuery(db))
    .orderBy('c.issued_at', 'desc')
    .orderBy('c.id', 'desc')
    .limit(f.limit)
    .offset(f.offset)) as CertificateListRow[];
  const countQ = db('certificate as c')
    .join('lot as l', 'l.id', 'c.lot_id')
    .join('material as m', 'm.id', 'l.material_id')
    .count({ n: '*' });
  const [{ n }] = (await where(countQ as unknown as ReturnType<typeof listQuery>)) as unknown as { n: number }[];
  return { rows, total: Number(n) };
}

function escapeLike(s: string): string {
  return s.replace(/[\\%_]/g, (c) => `\\${c}`);
}

export async function findListRow(db: Db, id: number): Promise<CertificateListRow | undefined> {
  return (await listQuery(db).where('c.id', id).first()) as CertificateListRow | undefined;
}

export async function findByNumber(db: Db, number: string): Promise<CertificateListRow | undefined> {
  return (await listQuery(db).where('c.number', number).first()) as CertificateListRow | undefined;
}

export async function findIdsBySha(db: Db, sha: string): Promise<number[]> {
  return (await db('certificate').where({ sha256: sha }).select('id').orderBy('id')).map((r: { id: number }) => r.id);
}

export async function pdfBytes(db: Db, id: number): Promise<Buffer | undefined> {
  const r = await db('certificate').where({ id }).select('pdf').first();
  return r?.pdf as Buffer | undefined;
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

export async function insertCertificate(db: Db, row: Omit<CertificateRow, 'id'>): Promise<number> {
  const [id] = await db('certificate').insert(row);
  return Number(id);
}

// ---------------------------------------------------------------------------------------------
// Content gathering (read-only)
// ---------------------------------------------------------------------------------------------

export interface LotRow {
  id: number;
  lot_number: string;
  material_id: number;
  supplier: string;
  supplier_lot: string;
  container_count: number;
  received_date: Date | string;
  status: string;
  identity_status: string;
  certificate_id: number | null;
  sampling_plan: 'every-container' | 'sqrt-n-plus-1' | null;
  updated_at: Date;
}

export const findLot = (db: Db, id: number): Promise<LotRow | undefined> => db('lot').where({ id }).first();

export const lockLot = (db: Db, id: number): Promise<LotRow | undefined> => db('lot').where({ id }).forUpdate().first();

export async function setLotCertificate(db: Db, lotId: number, certificateId: number): Promise<void> {
  await db('lot').where({ id: lotId }).update({ certificate_id: certificateId, updated_at: new Date() });
}

export interface MaterialRow {
  id: number;
  code: string;
  name: string;
  grade: string;
  monograph_ref: string;
}

export const findMaterial = (db: Db, id: number): Promise<MaterialRow | undefined> =>
  db('material').where({ id }).select('id', 'code', 'name', 'grade', 'monograph_ref').first();

export interface ContainerRow {
  id: number;
  seq: number;
  label: string;
}

export const containersOf = (db: Db, lotId: number): Promise<ContainerRow[]> =>
  db('container').where({ lot_id: lotId }).select('id', 'seq', 'label').orderBy('seq');

export interface TestRow {
  id: number;
  lot_id: number;
  attempt: number;
  status: string;
  method_id: number;
  instrument_id: number | null;
  performed_signature_id: number | null;
  verified_signature_id: number | null;
  retest_of_investigation_id: number | null;
}

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

export interface MeasurementRow {
  id: number;
  test_id: number;
  container_id: number;
  file_id: number;
  instrument_id: number;
  instrument_check_id: number;
  method_id: number;
  reference_ids: string;
  verdict: string;
  match_score: number | null;
  result: string;
  engine_version: string;
  created_at: Date;
  file_sha256: string;
  file_name: string;
}

export const measurementsOfTests = (db: Db, testIds: number[]): Promise<MeasurementRow[]> =>
  db('measurement as ms')
    .join('stored_file as f', 'f.id', 'ms.file_id')
    .whereIn('ms.test_id', testIds)
    .select(
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

export interface MethodRow {
  id: number;
  material_id: number;
  version: number;
  status: string;
  technique: string;
  params: string;
  approved_at: Date | null;
  approved_signature_id: number | null;
}

export const methodsByIds = (db: Db, ids: number[]): Promise<MethodRow[]> =>
  db('identity_method')
    .whereIn('id', ids)
    .select('id', 'material_id', 'version', 'status', 'technique', 'params', 'approved_at', 'approved_signature_id')
    .orderBy('id');

export interface ReferenceRow {
  id: number;
  code: string;
  material_id: number;
  file_id: number;
  status: string;
  technique: string;
  supplier: string;
  supplier_lot: string;
  approved_at: Date | null;
  approved_signature_id: number | null;
}

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

export interface InstrumentRow {
  id: number;
  name: string;
  serial_number: string;
  technique: string;
  sampling: string;
  location: string;
}

export const instrumentsByIds = (db: Db, ids: number[]): Promise<InstrumentRow[]> =>
  db('instrument')
    .whereIn('id', ids)
    .select('id', 'name', 'serial_number', 'technique', 'sampling', 'location')
    .orderBy('name');

export interface CheckRow {
  id: number;
  instrument_id: number;
  verdict: string;
  performed_at: Date;
  valid_until: Date | null;
  signature_id: number | null;
  performed_by_name: string | null;
  spec_kind: string | null;
  spec_version: number | null;
}

export const checksByIds = (db: Db, ids: number[]): Promise<CheckRow[]> =>
  db('instrument_check as k')
    .leftJoin('app_user as u', 'u.id', 'k.performed_by')
    .leftJoin('instrument_check_spec as s', 's.id', 'k.spec_id')
    .whereIn('k.id', ids)
    .select(
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

export interface SignatureRow {
  id: number;
  printed_name: string;
  meaning: string;
  signed_at: Date;
  statement: string | null;
}

export async function signaturesByIds(db: Db, ids: number[]): Promise<Map<number, SignatureRow>> {
  if (ids.length === 0) return new Map();
  const rows: SignatureRow[] = await db('e_signature')
    .whereIn('id', ids)
    .select('id', 'printed_name', 'meaning', 'signed_at', 'statement');
  return new Map(rows.map((r) => [Number(r.id), r]));
}

export async function fileBytes(db: Db, id: number): Promise<{ data: Buffer; file_name: string } | undefined> {
  return db('stored_file').where({ id }).select('data', 'file_name').first();
}
