/** Data access of suppliers, material sources and their status history. */
import type { Db } from '../../lib/db';
import type { MaterialSourceRow } from '../../lib/db-tables';
import { toSignatureRecord } from '../../lib/esign';
import type { SourceRecord, SourceStatusRecord, SupplierRecord } from './contract';
import { dateOnly } from '../../lib/dates';

export async function listSuppliers(db: Db): Promise<SupplierRecord[]> {
  const rows = await db('supplier as s')
    .leftJoin('app_user as u', 'u.id', 's.created_by')
    .select('s.*', 'u.full_name as u_name')
    .orderBy('s.name');
  return rows.map((r) => ({
    id: r.id,
    code: r.code,
    name: r.name,
    kind: r.kind,
    address: r.address,
    note: r.note,
    createdBy: r.created_by ? { id: r.created_by, name: r.u_name } : null,
    createdAt: new Date(r.created_at).toISOString(),
  }));
}

export const findSupplier = (db: Db, id: number) => db('supplier').where({ id }).first();

/** Status rows of sources, oldest first, with their signatures. */
async function statusRows(db: Db, sourceIds: number[]): Promise<Map<number, SourceStatusRecord[]>> {
  const out = new Map<number, SourceStatusRecord[]>();
  if (!sourceIds.length) return out;
  const rows = await db('source_status as st')
    .leftJoin('app_user as u', 'u.id', 'st.set_by')
    .leftJoin('e_signature as e', 'e.id', 'st.signature_id')
    .whereIn('st.source_id', sourceIds)
    .select(
      'st.*',
      'u.full_name as u_name',
      'e.id as e_id',
      'e.user_id as e_user_id',
      'e.printed_name as e_printed_name',
      'e.meaning as e_meaning',
      'e.signed_at as e_signed_at',
      'e.content_hash as e_content_hash',
      'e.statement as e_statement',
    )
    .orderBy('st.id');
  for (const r of rows) {
    const rec: SourceStatusRecord = {
      id: r.id,
      status: r.status,
      conditions: r.conditions,
      samplingPlan: r.sampling_plan,
      samplingJustification: r.sampling_justification,
      effectiveFrom: dateOnly(r.effective_from),
      reviewBy: r.review_by ? dateOnly(r.review_by) : null,
      reason: r.reason,
      setBy: r.set_by ? { id: r.set_by, name: r.u_name } : null,
      setAt: new Date(r.set_at).toISOString(),
      signature: r.e_id
        ? toSignatureRecord({
            id: r.e_id,
            user_id: r.e_user_id,
            printed_name: r.e_printed_name,
            meaning: r.e_meaning,
            signed_at: r.e_signed_at,
            content_hash: r.e_content_hash,
            statement: r.e_statement,
          })
        : null,
    };
    const list = out.get(r.source_id) ?? [];
    list.push(rec);
    out.set(r.source_id, list);
  }
  return out;
}

/** A source with the codes and names of its material, supplier and manufacturer (the join of listSources). */
type SourceWithNames = MaterialSourceRow & {
  m_code: string;
  m_name: string;
  s_code: string;
  s_name: string;
  mf_code: string | null;
  mf_name: string | null;
};

export async function listSources(db: Db, f: { materialId?: number; ids?: number[] } = {}): Promise<SourceRecord[]> {
  const q = db('material_source as ms')
    .join('material as m', 'm.id', 'ms.material_id')
    .join('supplier as s', 's.id', 'ms.supplier_id')
    .leftJoin('supplier as mf', 'mf.id', 'ms.manufacturer_id')
    .select<SourceWithNames[]>(
      'ms.*',
      'm.code as m_code',
      'm.name as m_name',
      's.code as s_code',
      's.name as s_name',
      'mf.code as mf_code',
      'mf.name as mf_name',
    )
    .orderBy(['m.name', 's.name', 'ms.id']);
  if (f.materialId) q.where('ms.material_id', f.materialId);
  if (f.ids) q.whereIn('ms.id', f.ids);
  const rows = await q;
  const hist = await statusRows(
    db,
    rows.map((r) => r.id),
  );
  return rows
    .filter((r) => (hist.get(r.id) ?? []).length > 0)
    .map((r) => {
      const history = hist.get(r.id)!;
      return {
        id: r.id,
        material: { id: r.material_id, code: r.m_code, name: r.m_name },
        supplier: { id: r.supplier_id, code: r.s_code, name: r.s_name },
        // manufacturer_id is a foreign key: with it, the left join finds the manufacturer's code and name
        manufacturer:
          r.manufacturer_id && r.mf_code !== null && r.mf_name !== null
            ? { id: r.manufacturer_id, code: r.mf_code, name: r.mf_name }
            : null,
        current: history[history.length - 1],
        history,
      };
    });
}

export async function findSource(db: Db, id: number): Promise<SourceRecord | undefined> {
  return (await listSources(db, { ids: [id] }))[0];
}

/** The source of a material from a supplier (and manufacturer, if named), or undefined. */
export async function sourceFor(
  db: Db,
  materialId: number,
  supplierId: number,
  manufacturerId: number | null,
): Promise<SourceRecord | undefined> {
  const row = await db('material_source')
    .where({ material_id: materialId, supplier_id: supplierId, manufacturer_key: manufacturerId ?? 0 })
    .first('id');
  return row ? findSource(db, row.id) : undefined;
}
