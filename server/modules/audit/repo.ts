/**
 * Reading the audit trail (knex). Lists are ordered by (occurred_at, id) and paged by a keyset
 * cursor on that pair, so page 1 and page 10,000 cost the same: each filter is an equality on
 * the leading column of an index whose next column is occurred_at (001_core, 007_audit_indexes),
 * and the implicit primary-key suffix of InnoDB indexes breaks ties. Counts are capped.
 * Text in the reason cannot use an index (any substring may be asked for), so a text search
 * reads at most TEXT_WINDOW events per request along the time index and says how far it got;
 * the next request continues from there. Every request stays bounded at 1,000,000 events.
 * Nothing here writes: the trail is appended only through server/lib/audit.ts.
 */
import type { Knex } from 'knex';
import type { AuditRow } from '../../lib/audit';
import { parseJson } from '../../lib/db';
import { namesFor } from './names';
import {
  TEXT_WINDOW,
  type AuditEventDetail,
  type AuditEventSummary,
  type AuditFilter,
  type FieldChange,
  type RecordNames,
  actionWords,
  fieldWords,
  referenceKind,
  refKey,
} from './contract';

export type Scope = 'all' | 'accounts';
type Db = Knex | Knex.Transaction;

const SUMMARY_COLUMNS = [
  'id',
  'occurred_at',
  'actor_id',
  'actor_name',
  'action',
  'entity_type',
  'entity_id',
  'reason',
  'ip',
] as const;

function escapeLike(s: string): string {
  return s.replace(/[\\%_]/g, (c) => `\\${c}`);
}

export interface FilterOptions {
  scope: Scope;
  /** internal: only events up to this id (an export's snapshot) */
  maxId?: number;
}

/** Applies the filter to a query on audit_event. */
export function applyFilter(qb: Knex.QueryBuilder, f: Partial<AuditFilter>, o: FilterOptions): Knex.QueryBuilder {
  if (o.scope === 'accounts') qb.where('entity_type', 'user');
  if (o.maxId !== undefined) qb.where('id', '<=', o.maxId);
  if (f.from) qb.where('occurred_at', '>=', new Date(f.from));
  if (f.to) qb.where('occurred_at', '<', new Date(f.to));
  if (f.actorId !== undefined) qb.where('actor_id', f.actorId);
  if (f.action) {
    if (f.action.endsWith('*')) qb.where('action', 'like', `${escapeLike(f.action.slice(0, -1))}%`);
    else qb.where('action', f.action);
  }
  if (f.entityType) qb.where('entity_type', f.entityType);
  if (f.entityId) qb.where('entity_id', f.entityId);
  if (f.q) qb.where('reason', 'like', `%${escapeLike(f.q)}%`);
  return qb;
}

export function hasAnyFilter(f: Partial<AuditFilter>): boolean {
  return Boolean(f.from || f.to || f.actorId !== undefined || f.action || f.entityType || f.entityId || f.q);
}

export interface Cursor {
  t: number; // occurred_at in ms since the epoch
  id: number;
}

export function encodeCursor(c: Cursor): string {
  return Buffer.from(`${c.t}.${c.id}`, 'utf8').toString('base64url');
}

export function decodeCursor(s: string): Cursor | null {
  const m = /^(\d{1,15})\.(\d{1,15})$/.exec(Buffer.from(s, 'base64url').toString('utf8'));
  return m ? { t: Number(m[1]), id: Number(m[2]) } : null;
}

export interface PageRequest {
  sort: 'asc' | 'desc';
  cursor?: Cursor | null;
  limit: number;
  /** the last event (in sort order) this request may read, inclusive (a text search's window) */
  edge?: Cursor | null;
}

function whereAfter(qb: Knex.QueryBuilder, sort: 'asc' | 'desc', c: Cursor, inclusive: boolean): void {
  const t = new Date(c.t);
  const op = sort === 'desc' ? '<' : '>';
  qb.where((w) =>
    w
      .where('occurred_at', op, t)
      .orWhere((x) => x.where('occurred_at', t).andWhere('id', inclusive ? `${op}=` : op, c.id)),
  );
}

function orderBy(qb: Knex.QueryBuilder, sort: 'asc' | 'desc'): void {
  qb.orderBy([
    { column: 'occurred_at', order: sort },
    { column: 'id', order: sort },
  ]);
}

export interface ListResult {
  rows: AuditEventSummary[];
  nextCursor: Cursor | null;
  /** for a text search: whether every event up to the filter's end was searched, and how far this request got */
  search?: { complete: boolean; searchedTo: string | null; window: number };
}

/**
 * One page of summaries after the cursor, in the sort order; nextCursor when more follow.
 * A text search reads at most TEXT_WINDOW events: when the page is not full by then, it returns
 * what it found with a cursor at the window's end, and search.complete = false.
 */
export async function listPage(db: Db, f: Partial<AuditFilter>, o: FilterOptions, p: PageRequest): Promise<ListResult> {
  const edge = f.q ? await windowEdge(db, f, o, p, TEXT_WINDOW) : null;
  const raw = await pageQuery(db, f, o, { ...p, edge }, SUMMARY_COLUMNS);
  const more = raw.length > p.limit;
  const kept = more ? raw.slice(0, p.limit) : raw;
  const names = await namesFor(
    db,
    kept.map((r) => ({ ...r, before_json: null, after_json: null })),
  );
  const rows = kept.map((r) => toSummary(r, names));
  const last = rows[rows.length - 1];
  if (more && last)
    return {
      rows,
      nextCursor: { t: new Date(last.occurredAt).getTime(), id: last.id },
      ...(f.q ? { search: { complete: false, searchedTo: last.occurredAt, window: TEXT_WINDOW } } : {}),
    };
  if (edge)
    return {
      rows,
      nextCursor: edge,
      search: { complete: false, searchedTo: new Date(edge.t).toISOString(), window: TEXT_WINDOW },
    };
  return {
    rows,
    nextCursor: null,
    ...(f.q ? { search: { complete: true, searchedTo: null, window: TEXT_WINDOW } } : {}),
  };
}

/**
 * The TEXT_WINDOW-th event after the cursor in sort order within the date range and scope (read
 * from the time index alone), or null when fewer remain.
 */
export async function windowEdge(
  db: Db,
  f: Partial<AuditFilter>,
  o: FilterOptions,
  p: PageRequest,
  size: number,
): Promise<Cursor | null> {
  const qb = db('audit_event').select('occurred_at', 'id');
  applyFilter(qb, { from: f.from, to: f.to }, o);
  if (p.cursor) whereAfter(qb, p.sort, p.cursor, false);
  orderBy(qb, p.sort);
  const rows = await qb.offset(size - 1).limit(1);
  return rows.length ? { t: new Date(rows[0].occurred_at).getTime(), id: Number(rows[0].id) } : null;
}

/** The raw rows of one page (limit + 1 to know whether more follow). */
export async function pageQuery(
  db: Db,
  f: Partial<AuditFilter>,
  o: FilterOptions,
  p: PageRequest,
  columns: readonly string[] | '*',
): Promise<AuditRow[]> {
  const qb = db('audit_event').select(columns === '*' ? '*' : columns);
  applyFilter(qb, f, o);
  if (p.cursor) whereAfter(qb, p.sort, p.cursor, false);
  if (p.edge) whereAfter(qb, p.sort === 'desc' ? 'asc' : 'desc', p.edge, true);
  orderBy(qb, p.sort);
  qb.limit(p.limit + 1);
  return qb;
}

/** Number of matching events, counted up to `cap` (+1 tells "more than cap"). */
export async function countCapped(
  db: Db,
  f: Partial<AuditFilter>,
  o: FilterOptions,
  cap: number,
): Promise<{ count: number; exact: boolean }> {
  if (!hasAnyFilter(f) && o.scope === 'all' && o.maxId === undefined) {
    // Ids are gap-free and assigned from audit_head: the last id is the exact number of events.
    const head = await db('audit_head').where({ id: 1 }).first();
    return { count: Number(head?.last_id ?? 0), exact: true };
  }
  const sub = applyFilter(db('audit_event').select(db.raw('1')), f, o).limit(cap + 1);
  const [row] = await db.from(sub.as('t')).count({ n: '*' });
  const n = Number(row.n);
  return n > cap ? { count: cap, exact: false } : { count: n, exact: true };
}

/** The id of the last event now (an export's snapshot bound). */
export async function lastEventId(db: Db): Promise<number> {
  const head = await db('audit_head').where({ id: 1 }).first();
  return Number(head?.last_id ?? 0);
}

export async function findEvent(db: Db, id: number): Promise<AuditRow | undefined> {
  return db('audit_event').where({ id }).first();
}

/** Events of one record in time order (oldest first), at most `cap` + 1. */
export async function eventsOfRecord(db: Db, entityType: string, entityId: string, cap: number): Promise<AuditRow[]> {
  // The history of a test attempt lists its measurement events too (docs/provenance.md).
  const measurements =
    entityType === 'identity_test'
      ? (
          await db('measurement')
            .where({ test_id: Number(entityId) || 0 })
            .select('id')
        ).map((r) => String(r.id))
      : [];
  return db('audit_event')
    .where((q) => {
      q.where({ entity_type: entityType, entity_id: entityId });
      if (measurements.length)
        q.orWhere((m) => m.where('entity_type', 'measurement').whereIn('entity_id', measurements));
    })
    .orderBy([
      { column: 'occurred_at', order: 'asc' },
      { column: 'id', order: 'asc' },
    ])
    .limit(cap + 1);
}

/** Distinct action names and record types (loose index scans), and the accounts that appear as actors. */
export async function facets(
  db: Db,
): Promise<{ actions: string[]; entityTypes: string[]; actors: { id: number; name: string }[] }> {
  const actions = (await db('audit_event').distinct('action').orderBy('action')).map((r) => r.action);
  const entityTypes = (await db('audit_event').distinct('entity_type').orderBy('entity_type')).map(
    (r) => r.entity_type,
  );
  const ids = (await db('audit_event').distinct('actor_id').whereNotNull('actor_id'))
    .map((r) => r.actor_id)
    .filter((id): id is number => id !== null);
  const users = ids.length ? await db('app_user').select('id', 'full_name', 'username').whereIn('id', ids) : [];
  const actors = users
    .map((u) => ({
      id: u.id,
      name: `${u.full_name} (${u.username})`,
    }))
    .sort((a, b) => a.name.localeCompare(b.name));
  return { actions, entityTypes, actors };
}

export function toSummary(
  r: Pick<AuditRow, (typeof SUMMARY_COLUMNS)[number]>,
  names: RecordNames = {},
): AuditEventSummary {
  return {
    id: Number(r.id),
    occurredAt: new Date(r.occurred_at).toISOString(),
    actorId: r.actor_id === null ? null : Number(r.actor_id),
    actorName: r.actor_name,
    actorUsername: r.actor_id === null ? null : (names[refKey('user', Number(r.actor_id))] ?? null),
    action: r.action,
    actionWords: actionWords(r.action),
    entityType: r.entity_type,
    entityId: r.entity_id,
    recordNumber: r.entity_id === null ? null : (names[refKey(r.entity_type, r.entity_id)] ?? null),
    reason: r.reason,
    ip: r.ip,
  };
}

export function toDetail(r: AuditRow, names: RecordNames = {}): AuditEventDetail {
  const before = parseJson<unknown>(r.before_json, null);
  const after = parseJson<unknown>(r.after_json, null);
  return {
    ...toSummary(r, names),
    before,
    after,
    changes: nameChanges(diffValues(before, after), names),
    prevHash: r.prev_hash,
    hash: r.hash,
  };
}

/** What a stored id (or list of ids) in a field names: a person for account fields, else the record's number. */
export function nameOfValue(path: string, v: unknown, names: RecordNames): string | null {
  const kind = referenceKind(path);
  if (!kind) return null;
  const one = (x: unknown): string | null =>
    typeof x === 'number' ? (names[refKey(kind === 'user' ? 'person' : kind, x)] ?? null) : null;
  if (Array.isArray(v)) {
    const all = v.map(one);
    return all.length > 0 && all.every((x) => x !== null) ? all.join(', ') : null;
  }
  return one(v);
}

function nameChanges(changes: FieldChange[], names: RecordNames): FieldChange[] {
  return changes.map((c) => {
    const beforeName = nameOfValue(c.path, c.before, names);
    const afterName = nameOfValue(c.path, c.after, names);
    return {
      ...c,
      ...(beforeName !== null ? { beforeName } : {}),
      ...(afterName !== null ? { afterName } : {}),
    };
  });
}

// ---------------------------------------------------------------------------------------------
// before/after comparison, field by field (flattened paths like "bands[2].position")

function isPlainObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}

/** Arrays of plain values (e.g. roles) read best whole: ["operator"] -> ["operator","verifier"]. */
function isPlainArray(v: unknown): boolean {
  return Array.isArray(v) && v.every((x) => x === null || typeof x !== 'object');
}

function flatten(v: unknown, prefix: string, out: Map<string, unknown>, depth: number): void {
  if (depth > 6 || (!isPlainObject(v) && !Array.isArray(v)) || (prefix && isPlainArray(v))) {
    out.set(prefix || '(value)', v);
    return;
  }
  const entries: [string, unknown][] = Array.isArray(v)
    ? v.map((x, i) => [`${prefix}[${i}]`, x])
    : Object.entries(v).map(([k, x]) => [prefix ? `${prefix}.${k}` : k, x]);
  if (entries.length === 0) {
    out.set(prefix || '(value)', v);
    return;
  }
  for (const [k, x] of entries) flatten(x, k, out, depth + 1);
}

/** Field-level comparison of an event's before and after values. */
export function diffValues(before: unknown, after: unknown): FieldChange[] {
  const b = new Map<string, unknown>();
  const a = new Map<string, unknown>();
  if (before !== null && before !== undefined) flatten(before, '', b, 0);
  if (after !== null && after !== undefined) flatten(after, '', a, 0);
  const paths = [...new Set([...b.keys(), ...a.keys()])];
  return paths.map((path) => {
    const inB = b.has(path);
    const inA = a.has(path);
    const bv = inB ? b.get(path) : null;
    const av = inA ? a.get(path) : null;
    const kind: FieldChange['kind'] = !inB
      ? 'added'
      : !inA
        ? 'removed'
        : JSON.stringify(bv) === JSON.stringify(av)
          ? 'unchanged'
          : 'changed';
    return { path, label: fieldWords(path), before: bv, after: av, kind };
  });
}
