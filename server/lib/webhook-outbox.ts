/**
 * Outbound webhooks (issue 14 item 6). A GMP event (lot received, identity passed or failed,
 * released, rejected) enqueues one delivery per active endpoint that asked for it, inside the
 * transaction of the event itself, so an event is announced exactly when it happened. A background
 * job under a lease (server/lib/lease.ts startJob: once per site, whatever the number of app
 * servers) sends due deliveries: JSON signed after the Standard Webhooks scheme with the
 * `standardwebhooks` package (HMAC-SHA256 over "id.timestamp.body"; headers webhook-id,
 * webhook-timestamp, webhook-signature). The webhook-id stays the same on every retry, so a
 * receiver de-duplicates; failures retry with exponential back-off (30 s doubling, at most 6 h)
 * and give up after MAX_ATTEMPTS, visible on the administrator's page. No network call runs inside
 * a database transaction.
 */
import crypto from 'node:crypto';
import type { Knex } from 'knex';
import { Webhook } from 'standardwebhooks';
import { canonicalJson } from './canonical';
import { startJob, type RunningJob } from './lease';
import { parseJson } from './db';
import type { WebhookEvent } from '../modules/integration/contract';

export const MAX_ATTEMPTS = 8;
const FIRST_BACKOFF_MS = 30_000;
const MAX_BACKOFF_MS = 6 * 3600_000;
const TIMEOUT_MS = 10_000;

export function backoffMs(attempts: number): number {
  return Math.min(MAX_BACKOFF_MS, FIRST_BACKOFF_MS * 2 ** Math.max(0, attempts - 1));
}

/** Enqueues an event for every active endpoint subscribed to it (inside the caller's transaction). */
export async function enqueueEvent(trx: Knex.Transaction, type: WebhookEvent, data: Record<string, unknown>) {
  const endpoints = await trx('webhook_endpoint').whereNull('deactivated_at').select('id', 'events');
  const now = new Date();
  const messageId = `msg_${crypto.randomUUID()}`;
  const payload = canonicalJson({ type, timestamp: now.toISOString(), data });
  const rows = endpoints
    .filter((e) => parseJson<string[]>(e.events, []).includes(type))
    .map((e) => ({
      endpoint_id: e.id,
      message_id: messageId,
      event_type: type,
      payload,
      status: 'pending',
      attempts: 0,
      next_attempt_at: now,
      created_at: now,
    }));
  if (rows.length) await trx('webhook_delivery').insert(rows);
}

/** Sends the due deliveries once (the job's work; tests call it directly). */
export async function deliverDue(db: Knex, limit = 50): Promise<{ sent: number; failed: number }> {
  const due = await db('webhook_delivery as d')
    .join('webhook_endpoint as e', 'e.id', 'd.endpoint_id')
    .where('d.status', 'pending')
    .where('d.next_attempt_at', '<=', new Date())
    .whereNull('e.deactivated_at')
    .orderBy('d.id')
    .limit(limit)
    .select('d.*', 'e.url', 'e.secret');
  let sent = 0;
  let failed = 0;
  for (const d of due) {
    const attempts = Number(d.attempts) + 1;
    const ts = new Date();
    let code: number | null = null;
    let error: string | null = null;
    try {
      const signature = new Webhook(d.secret).sign(d.message_id, ts, d.payload);
      const res = await fetch(d.url, {
        method: 'POST',
        headers: {
          'content-type': 'application/json',
          'webhook-id': d.message_id,
          'webhook-timestamp': String(Math.floor(ts.getTime() / 1000)),
          'webhook-signature': signature,
          'user-agent': 'Drumline-Webhooks',
        },
        body: d.payload,
        redirect: 'manual',
        signal: AbortSignal.timeout(TIMEOUT_MS),
      });
      code = res.status;
      await res.body?.cancel().catch(() => undefined);
      if (res.status < 200 || res.status >= 300) error = `receiver answered ${res.status}`;
    } catch (e) {
      error = String((e as Error).message ?? e).slice(0, 500);
    }
    if (!error) {
      sent++;
      await db('webhook_delivery').where({ id: d.id }).update({
        status: 'delivered',
        attempts,
        last_status_code: code,
        last_error: null,
        delivered_at: new Date(),
      });
    } else {
      failed++;
      await db('webhook_delivery')
        .where({ id: d.id })
        .update({
          status: attempts >= MAX_ATTEMPTS ? 'failed' : 'pending',
          attempts,
          last_status_code: code,
          last_error: error,
          next_attempt_at: new Date(Date.now() + backoffMs(attempts)),
        });
    }
  }
  return { sent, failed };
}

/** The sender under its lease, once per site (DRUMLINE_WEBHOOK_INTERVAL_MS, default 10 s). */
export function startWebhookJob(db: Knex): RunningJob {
  return startJob(db, {
    name: 'webhooks',
    intervalMs: Number(process.env.DRUMLINE_WEBHOOK_INTERVAL_MS ?? 10_000),
    run: (d) => deliverDue(d),
  });
}
