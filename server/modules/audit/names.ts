/**
 * Business numbers for stored ids in the audit views and exports (docs/compliance.md, "Audit
 * trail in words"): a lot is named by its lot number, an investigation, certificate or reference
 * by its number or code, an account by its user name, a test attempt by its lot and attempt. The
 * names are looked up when the trail is read; the stored events keep their ids unchanged.
 * One query per record type for a whole page of events.
 */
import type { Knex } from 'knex';
import type { AuditRow } from '../../lib/audit';
import { parseJson } from '../../lib/db';
import { referenceKind, refKey, type RecordNames } from './contract';

type Db = Knex | Knex.Transaction;

/** Collects the (type, id) pairs a set of events names: each event's record and the id fields of its values. */
export function referencesOf(
  rows: Pick<AuditRow, 'entity_type' | 'entity_id' | 'actor_id' | 'before_json' | 'after_json'>[],
): Map<string, Set<number>> {
  const out = new Map<string, Set<number>>();
  const add = (kind: string, id: unknown) => {
    const n = typeof id === 'number' ? id : typeof id === 'string' && /^\d{1,10}$/.test(id) ? Number(id) : NaN;
    if (!Number.isSafeInteger(n) || n <= 0) return;
    let s = out.get(kind);
    if (!s) out.set(kind, (s = new Set()));
    s.add(n);
  };
  const walk = (v: unknown, key: string, depth: number) => {
    if (depth > 6 || v === null || v === undefined) return;
    if (Array.isArray(v)) {
      const kind = referenceKind(key);
      for (const x of v) {
        if (kind && typeof x === 'number') add(kind, x);
        else walk(x, key, depth + 1);
      }
      return;
    }
    if (typeof v === 'object') {
      for (const [k, x] of Object.entries(v)) walk(x, k, depth + 1);
      return;
    }
    const kind = referenceKind(key);
    if (kind && typeof v === 'number') add(kind, v);
  };
  for (const r of rows) {
    if (r.entity_id !== null) add(r.entity_type, r.entity_id);
    if (r.actor_id !== null) add('user', r.actor_id);
    walk(parseJson<unknown>(r.before_json, null), '', 0);
    walk(parseJson<unknown>(r.after_json, null), '', 0);
  }
  return out;
}

/** The business name of each (type, id): "lot:5" -> "L-2026-00005", "user:1" -> "olga". */
export async function lookUpNames(db: Db, refs: Map<string, Set<number>>): Promise<RecordNames> {
  const names: RecordNames = {};
  const put = (kind: string, id: unknown, name: unknown) => {
    if (name !== null && name !== undefined && name !== '') names[refKey(kind, Number(id))] = String(name);
  };
  const ids = (kind: string) => [...(refs.get(kind) ?? [])];
  const each = async (
    kind: string,
    query: (list: number[]) => Promise<Record<string, unknown>[]>,
    name: (r: Record<string, unknown>) => unknown,
  ) => {
    const list = ids(kind);
    if (list.length === 0) return;
    for (const r of await query(list)) put(kind, r.id, name(r));
  };
  await each(
    'user',
    (l) => db('app_user').select('id', 'username').whereIn('id', l),
    (r) => r.username,
  );
  await each(
    'lot',
    (l) => db('lot').select('id', 'lot_number').whereIn('id', l),
    (r) => r.lot_number,
  );
  await each(
    'investigation',
    (l) => db('investigation').select('id', 'number').whereIn('id', l),
    (r) => r.number,
  );
  await each(
    'certificate',
    (l) => db('certificate').select('id', 'number').whereIn('id', l),
    (r) => r.number,
  );
  await each(
    'reference_spectrum',
    (l) => db('reference_spectrum').select('id', 'code').whereIn('id', l),
    (r) => r.code,
  );
  await each(
    'material',
    (l) => db('material').select('id', 'code').whereIn('id', l),
    (r) => r.code,
  );
  await each(
    'container',
    (l) => db('container').select('id', 'label').whereIn('id', l),
    (r) => r.label,
  );
  await each(
    'instrument',
    (l) => db('instrument').select('id', 'name').whereIn('id', l),
    (r) => r.name,
  );
  await each(
    'identity_test',
    (l) =>
      db('identity_test as t')
        .join('lot as l', 'l.id', 't.lot_id')
        .select('t.id', 't.attempt', 'l.lot_number')
        .whereIn('t.id', l),
    (r) => `${String(r.lot_number)} attempt ${String(r.attempt)}`,
  );
  await each(
    'identity_method',
    (l) =>
      db('identity_method as m')
        .join('material as x', 'x.id', 'm.material_id')
        .select('m.id', 'm.version', 'x.code')
        .whereIn('m.id', l),
    (r) => `${String(r.code)} method v${String(r.version)}`,
  );
  await each(
    'measurement',
    (l) =>
      db('measurement as m')
        .join('container as c', 'c.id', 'm.container_id')
        .select('m.id', 'c.label')
        .whereIn('m.id', l),
    (r) => `${String(r.label)}, measurement ${String(r.id)}`,
  );
  await each(
    'instrument_check',
    (l) =>
      db('instrument_check as k')
        .join('instrument as i', 'i.id', 'k.instrument_id')
        .select('k.id', 'i.name')
        .whereIn('k.id', l),
    (r) => `${String(r.name)}, check ${String(r.id)}`,
  );
  await each(
    'instrument_check_spec',
    (l) =>
      db('instrument_check_spec as s')
        .join('instrument as i', 'i.id', 's.instrument_id')
        .select('s.id', 's.version', 'i.name')
        .whereIn('s.id', l),
    (r) => `${String(r.name)}, check specification v${String(r.version)}`,
  );
  await each(
    'audit_review',
    (l) => db('audit_review').select('id', 'number').whereIn('id', l),
    (r) => r.number,
  );
  return names;
}

/** Full names of accounts, for field values ("performed by: Olga Brandt"). */
export async function lookUpPeople(db: Db, refs: Map<string, Set<number>>): Promise<RecordNames> {
  const list = [...(refs.get('user') ?? [])];
  const out: RecordNames = {};
  if (list.length === 0) return out;
  for (const r of await db('app_user').select('id', 'full_name', 'username').whereIn('id', list))
    out[refKey('person', Number(r.id))] = `${String(r.full_name)} (${String(r.username)})`;
  return out;
}

/** Every name a set of events needs: business numbers of records and ids, and people's names. */
export async function namesFor(
  db: Db,
  rows: Pick<AuditRow, 'entity_type' | 'entity_id' | 'actor_id' | 'before_json' | 'after_json'>[],
): Promise<RecordNames> {
  const refs = referencesOf(rows);
  return { ...(await lookUpNames(db, refs)), ...(await lookUpPeople(db, refs)) };
}
