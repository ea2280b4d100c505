/**
 * The audit trail core: one append function used inside the caller's transaction, and the
 * chain check. Every row carries the previous row's hash and its own SHA-256 over a canonical
 * serialisation, so a change behind the application's back breaks the chain. Appends are
 * serialised through the single audit_head row (SELECT ... FOR UPDATE), ids are gap-free.
 */
import type { Knex } from 'knex';
import { canonicalJson, sha256Hex } from './canonical';
import type { ChainReport } from './contract';

export interface Actor {
  id: number | null;
  name: string;
}

export const SYSTEM_ACTOR: Actor = { id: null, name: 'Drumline (system)' };

export interface AuditInput {
  actor: Actor;
  action: string;
  entityType: string;
  entityId?: string | number | null;
  before?: unknown;
  after?: unknown;
  reason?: string | null;
  ip?: string | null;
}

export interface AuditRow {
  id: number;
  occurred_at: Date;
  actor_id: number | null;
  actor_name: string;
  action: string;
  entity_type: string;
  entity_id: string | null;
  before_json: string | null;
  after_json: string | null;
  reason: string | null;
  ip: string | null;
  prev_hash: string;
  hash: string;
}

/** The content a row's hash covers: every column except the hash itself. */
export function rowHash(r: Omit<AuditRow, 'hash'>): string {
  return sha256Hex(
    canonicalJson({
      id: Number(r.id),
      occurred_at: new Date(r.occurred_at).toISOString(),
      actor_id: r.actor_id,
      actor_name: r.actor_name,
      action: r.action,
      entity_type: r.entity_type,
      entity_id: r.entity_id,
      before_json: r.before_json,
      after_json: r.after_json,
      reason: r.reason,
      ip: r.ip,
      prev_hash: r.prev_hash,
    }),
  );
}

function toJson(v: unknown): string | null {
  return v === undefined || v === null ? null : canonicalJson(v);
}

/** Appends one event. Must be called inside a transaction (the caller's). */
export async function appendAudit(trx: Knex.Transaction, e: AuditInput): Promise<number> {
  const head = await trx('audit_head').where({ id: 1 }).forUpdate().first();
  const id = Number(head.last_id) + 1;
  const now = new Date();
  const row: Omit<AuditRow, 'hash'> = {
    id,
    occurred_at: now,
    actor_id: e.actor.id,
    actor_name: e.actor.name,
    action: e.action,
    entity_type: e.entityType,
    entity_id: e.entityId === undefined || e.entityId === null ? null : String(e.entityId),
    before_json: toJson(e.before),
    after_json: toJson(e.after),
    reason: e.reason ?? null,
    ip: e.ip ?? null,
    prev_hash: head.last_hash,
  };
  const hash = rowHash(row);
  await trx('audit_event').insert({ ...row, hash });
  await trx('audit_head').where({ id: 1 }).update({ last_id: id, last_hash: hash });
  return id;
}

/** Appends in a transaction of its own (for events outside any business write, e.g. a failed sign-in). */
export async function auditNow(db: Knex, e: AuditInput): Promise<number> {
  return db.transaction((trx) => appendAudit(trx, e));
}

/** Walks the whole chain in id order, in pages, and reports the first row that does not fit. */
export async function verifyChain(db: Knex, pageSize = 5000): Promise<ChainReport> {
  let prevHash = '0'.repeat(64);
  let expectedId = 1;
  let count = 0;
  for (;;) {
    const rows: AuditRow[] = await db('audit_event').where('id', '>=', expectedId).orderBy('id').limit(pageSize);
    if (rows.length === 0) break;
    for (const r of rows) {
      const id = Number(r.id);
      if (id !== expectedId)
        return {
          ok: false,
          events: count,
          brokenAt: expectedId,
          problem: `event ${expectedId} is missing (next is ${id})`,
        };
      if (r.prev_hash !== prevHash)
        return {
          ok: false,
          events: count,
          brokenAt: id,
          problem: 'link to the previous event does not match',
          expected: prevHash,
          found: r.prev_hash,
        };
      const h = rowHash(r);
      if (h !== r.hash)
        return {
          ok: false,
          events: count,
          brokenAt: id,
          problem: 'content does not match its hash (altered)',
          expected: h,
          found: r.hash,
        };
      prevHash = r.hash;
      expectedId = id + 1;
      count++;
    }
  }
  const head = await db('audit_head').where({ id: 1 }).first();
  if (head && Number(head.last_id) !== count)
    return {
      ok: false,
      events: count,
      brokenAt: count + 1,
      problem: `the chain ends at event ${count} but ${head.last_id} were written (events removed)`,
    };
  return { ok: true, events: count, lastHash: prevHash, lastId: count };
}
