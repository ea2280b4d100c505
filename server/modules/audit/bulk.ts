/**
 * Bulk append for benchmarks and tests: many events with multi-row INSERTs, hashed exactly as
 * appendAudit hashes them (rowHash over the same columns, keyed, each row pointing at the previous
 * hash), so the result is one valid chain. Each chunk is a transaction that holds the
 * audit_head row lock, like appendAudit; times never go backwards (clamped to the last event).
 * Not used by the application's own routes.
 */
import { transactionWithRetry } from '../../lib/retry';
import type { Knex } from 'knex';
import { lockHead, rowHash, type AuditInput, type AuditRow } from '../../lib/audit';
import { canonicalJson } from '../../lib/canonical';

/** An event as appendAudit takes it, with the time it happened. */
export interface BulkEvent extends AuditInput {
  occurredAt: Date;
}

const json = (v: unknown) => (v === undefined || v === null ? null : canonicalJson(v));

/** Appends `count` events made by `make(i)`; returns the first and last id written. */
export async function bulkAppendAudit(
  db: Knex,
  count: number,
  make: (i: number) => BulkEvent,
  opts: { batchSize?: number; chunkSize?: number; onProgress?: (done: number) => void } = {},
): Promise<{ firstId: number; lastId: number }> {
  const batchSize = opts.batchSize ?? 1000; // rows per INSERT statement
  const chunkSize = opts.chunkSize ?? 20_000; // rows per transaction
  let firstId = 0;
  let lastId = 0;
  for (let start = 0; start < count; start += chunkSize) {
    const end = Math.min(count, start + chunkSize);
    await transactionWithRetry(db, async (trx) => {
      const head = await lockHead(trx);
      let id = head.lastId;
      let prev: string = head.lastHash;
      const lastRow = id > 0 ? await trx('audit_event').select('occurred_at').where({ id }).first() : undefined;
      let lastTime = lastRow ? new Date(lastRow.occurred_at).getTime() : 0;
      let batch: AuditRow[] = [];
      for (let i = start; i < end; i++) {
        const e = make(i);
        id++;
        const t = Math.max(e.occurredAt.getTime(), lastTime);
        lastTime = t;
        const row: Omit<AuditRow, 'hash'> = {
          id,
          occurred_at: new Date(t),
          actor_id: e.actor.id,
          actor_name: e.actor.name,
          action: e.action,
          entity_type: e.entityType,
          entity_id: e.entityId === undefined || e.entityId === null ? null : String(e.entityId),
          before_json: json(e.before),
          after_json: json(e.after),
          reason: e.reason ?? null,
          ip: e.ip ?? null,
          prev_hash: prev,
        };
        const hash = rowHash(row, head.key);
        prev = hash;
        batch.push({ ...row, hash });
        if (batch.length >= batchSize) {
          await trx('audit_event').insert(batch);
          batch = [];
        }
      }
      if (batch.length) await trx('audit_event').insert(batch);
      await trx('audit_head').where({ id: 1 }).update({ last_id: id, last_hash: prev });
      if (!firstId) firstId = head.lastId + 1;
      lastId = id;
    });
    opts.onProgress?.(end);
  }
  return { firstId, lastId };
}
