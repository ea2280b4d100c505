/**
 * The audit trail core: one append function used inside the caller's transaction, and the
 * chain walk. Every row carries the previous row's hash and its own hash over a canonical
 * serialisation, so a change behind the application's back breaks the chain. Appends are
 * serialised through the single audit_head row (SELECT ... FOR UPDATE), ids are gap-free.
 *
 * Keyed chain (docs/compliance.md, "Audit chain anchored outside the database"): from a stated
 * event on (recorded in audit_chain_key and audit_head.keyed_from, and announced by the event
 * 'audit.chain-keyed' itself) the hash is an HMAC-SHA-256 with a key held outside MariaDB
 * (audit-key.ts); earlier events keep their plain SHA-256. The first append that finds no keyed
 * start writes it. Checkpoints outside the database (server/modules/audit/anchor.ts) hold the
 * head so that even a rewrite of the unkeyed part is found.
 */
import crypto from 'node:crypto';
import type { Knex } from 'knex';
import { transactionWithRetry } from './retry';
import { auditKey } from './audit-key';
import { canonicalJson, sha256Hex } from './canonical';
import type { ChainReport } from './contract';
import type { AuditEventRow } from './db-tables';
import { must } from './db';

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

/** An audit event as stored (the generated row type under the name the audit modules use). */
export type AuditRow = AuditEventRow;

/**
 * A row's hash over every column except the hash itself: HMAC-SHA-256 with `key` for an event
 * of the keyed chain, plain SHA-256 (without a key) for an event before it.
 */
export function rowHash(r: Omit<AuditRow, 'hash'>, key?: Buffer | null): string {
  const content = canonicalJson({
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
  });
  return key ? crypto.createHmac('sha256', key).update(content).digest('hex') : sha256Hex(content);
}

/** Whether event `id` belongs to the keyed chain that starts at `keyedFrom`. */
export const isKeyed = (id: number, keyedFrom: number | null): boolean => keyedFrom !== null && id >= keyedFrom;

export interface LockedHead {
  lastId: number;
  lastHash: string;
  keyedFrom: number;
  key: Buffer;
}

/**
 * Locks the audit head (inside the caller's transaction) and returns it with the chain key.
 * Starts the keyed chain if it has not started: the event 'audit.chain-keyed' is the first keyed
 * event. Refuses to write when this server's key is not the one that keyed the chain.
 */
export async function lockHead(trx: Knex.Transaction): Promise<LockedHead> {
  const head = must(await trx('audit_head').where({ id: 1 }).forUpdate().first(), 'The audit head row');
  const k = auditKey();
  const lastId = head.last_id;
  const lastHash = head.last_hash;
  if (head.keyed_from === null) {
    const id = lastId + 1;
    const row: Omit<AuditRow, 'hash'> = {
      id,
      occurred_at: new Date(),
      actor_id: SYSTEM_ACTOR.id,
      actor_name: SYSTEM_ACTOR.name,
      action: 'audit.chain-keyed',
      entity_type: 'audit_chain',
      entity_id: String(id),
      before_json: null,
      after_json: canonicalJson({ firstKeyedEvent: id, keyId: k.keyId, hash: 'HMAC-SHA-256' }),
      reason: null,
      ip: null,
      prev_hash: lastHash,
    };
    const hash = rowHash(row, k.key);
    await trx('audit_event').insert({ ...row, hash });
    await trx('audit_chain_key').insert({ key_id: k.keyId, first_event_id: id, recorded_at: row.occurred_at });
    await trx('audit_head').where({ id: 1 }).update({ last_id: id, last_hash: hash, keyed_from: id, key_id: k.keyId });
    return { lastId: id, lastHash: hash, keyedFrom: id, key: k.key };
  }
  if (head.key_id !== k.keyId)
    throw new Error(
      `This server's audit chain key (id ${k.keyId}) is not the key that keys the audit trail (id ${head.key_id}, ` +
        `from event ${head.keyed_from}); no audit event can be written until the right key is configured.`,
    );
  return { lastId, lastHash, keyedFrom: head.keyed_from, key: k.key };
}

function toJson(v: unknown): string | null {
  return v === undefined || v === null ? null : canonicalJson(v);
}

/** Appends one event. Must be called inside a transaction (the caller's). */
export async function appendAudit(trx: Knex.Transaction, e: AuditInput): Promise<number> {
  const head = await lockHead(trx);
  const id = head.lastId + 1;
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
    prev_hash: head.lastHash,
  };
  const hash = rowHash(row, head.key);
  await trx('audit_event').insert({ ...row, hash });
  await trx('audit_head').where({ id: 1 }).update({ last_id: id, last_hash: hash });
  return id;
}

/** Appends in a transaction of its own (for events outside any business write, e.g. a failed sign-in). */
export async function auditNow(db: Knex, e: AuditInput): Promise<number> {
  // retried whole on deadlock or Galera certification failure, like every write that takes the head
  return transactionWithRetry(db, (trx) => appendAudit(trx, e));
}

export interface WalkOptions {
  /** First event to check (default 1) and the hash the event before it must have. */
  from?: number;
  prevHash?: string;
  pageSize?: number;
  /** Called after each page with the number of events checked so far. */
  onProgress?: (checked: number) => Promise<void> | void;
  /** Events whose hash must equal a known value (checkpoints): id -> hash. */
  anchors?: Map<number, { hash: string; label: string }>;
}

export interface ChainState {
  keyedFrom: number | null;
  keyId: string | null;
  headId: number;
  headHash: string;
  /** The keyed start recorded in audit_chain_key (all rows: more than one means a restart). */
  starts: { keyId: string; firstEventId: number }[];
}

export async function chainState(db: Knex): Promise<ChainState> {
  const head = await db('audit_head').where({ id: 1 }).first();
  const starts = await db('audit_chain_key').orderBy('id').select('key_id', 'first_event_id');
  return {
    keyedFrom: head?.keyed_from === null || head?.keyed_from === undefined ? null : Number(head.keyed_from),
    keyId: head?.key_id ?? null,
    headId: Number(head?.last_id ?? 0),
    headHash: head?.last_hash ?? '0'.repeat(64),
    starts: starts.map((r) => ({ keyId: r.key_id, firstEventId: Number(r.first_event_id) })),
  };
}

/** Problems with the keyed start itself (before any event is walked). */
export function keyedStartProblem(state: ChainState): string | null {
  if (state.starts.length > 1)
    return `the keyed chain was started ${state.starts.length} times (events ${state.starts.map((s) => s.firstEventId).join(', ')})`;
  const start = state.starts[0];
  if (!start) return state.keyedFrom === null ? null : 'the record of the keyed start is missing';
  if (state.keyedFrom !== start.firstEventId)
    return `the keyed chain starts at event ${start.firstEventId} but the head says ${state.keyedFrom ?? 'none'}`;
  if (start.keyId !== auditKey().keyId)
    return `the audit trail is keyed with key ${start.keyId}, but this server holds key ${auditKey().keyId}`;
  return null;
}

/**
 * Walks the chain in id order from `from`, in pages, and reports the first row that does not fit:
 * a missing id, a broken link, a hash that does not match its content (HMAC with the key from the
 * keyed start on), or an anchored event whose hash differs from its checkpoint.
 */
export async function walkChain(db: Knex, opts: WalkOptions = {}): Promise<ChainReport> {
  const state = await chainState(db);
  const startProblem = keyedStartProblem(state);
  if (startProblem)
    return { ok: false, events: 0, brokenAt: state.starts[0]?.firstEventId ?? 1, problem: startProblem };
  const key = state.keyedFrom !== null ? auditKey().key : null;
  const pageSize = opts.pageSize ?? 5000;
  let prevHash = opts.prevHash ?? '0'.repeat(64);
  let expectedId = opts.from ?? 1;
  let count = expectedId - 1;
  for (;;) {
    // Only up to the head read above: events committed while the walk runs belong to the next walk.
    const rows: AuditRow[] = await db('audit_event')
      .where('id', '>=', expectedId)
      .andWhere('id', '<=', state.headId)
      .orderBy('id')
      .limit(pageSize);
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
      const h = rowHash(r, isKeyed(id, state.keyedFrom) ? key : null);
      if (h !== r.hash)
        return {
          ok: false,
          events: count,
          brokenAt: id,
          problem: 'content does not match its hash (altered)',
          expected: h,
          found: r.hash,
        };
      const anchor = opts.anchors?.get(id);
      if (anchor && anchor.hash !== r.hash)
        return {
          ok: false,
          events: count,
          brokenAt: id,
          problem: `event ${id} differs from ${anchor.label}: the chain was rewritten`,
          expected: anchor.hash,
          found: r.hash,
        };
      prevHash = r.hash;
      expectedId = id + 1;
      count++;
    }
    await opts.onProgress?.(count - (opts.from ?? 1) + 1);
  }
  if (state.headId !== count)
    return {
      ok: false,
      events: count,
      brokenAt: count + 1,
      problem: `the chain ends at event ${count} but ${state.headId} were written (events removed)`,
    };
  if (count > 0 && prevHash !== state.headHash)
    return {
      ok: false,
      events: count,
      brokenAt: count,
      problem: 'the last event does not match the hash the head recorded for it',
      expected: state.headHash,
      found: prevHash,
    };
  // Every writer inserts an event and moves the head in one transaction, so an event beyond the
  // head read afterwards was added around the head (written without the audit service).
  const maxRow = await db('audit_event').max({ m: 'id' }).first();
  const headAfter = await db('audit_head').where({ id: 1 }).first();
  const maxId = Number(maxRow?.m ?? 0);
  if (maxId > Number(headAfter?.last_id ?? 0))
    return {
      ok: false,
      events: count,
      brokenAt: Number(headAfter?.last_id ?? 0) + 1,
      problem: `event ${maxId} lies beyond the head (${Number(headAfter?.last_id ?? 0)}): written around the audit service`,
    };
  return { ok: true, events: count, lastHash: prevHash, lastId: count };
}

/** Walks the whole chain from the first event (no checkpoint). */
export async function verifyChain(db: Knex, pageSize = 5000): Promise<ChainReport> {
  return walkChain(db, { pageSize });
}
