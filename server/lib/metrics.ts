/**
 * Metrics in the Prometheus text format (prom-client), read at GET /api/metrics by administrators
 * or by a scraper holding METRICS_TOKEN (docs/operations.md, "Monitoring"). Every app server
 * keeps its own request and compute figures (a scraper reads each server); the database figures
 * (mail outbox, pending certificates) are read from MariaDB at scrape time, so every server
 * reports the same site-wide values.
 */
import type { RequestHandler } from 'express';
import type { Knex } from 'knex';
import client from 'prom-client';
import { routeOf } from './log';

export const registry = new client.Registry();
registry.setDefaultLabels({ app: 'drumline' });
client.collectDefaultMetrics({ register: registry, prefix: 'drumline_' });

const LATENCY_BUCKETS = [0.005, 0.01, 0.025, 0.05, 0.1, 0.15, 0.25, 0.5, 1, 2.5, 5, 10];

export const httpDuration = new client.Histogram({
  name: 'drumline_http_request_duration_seconds',
  help: 'Time from request to the end of the response, by declared route, method and status class',
  labelNames: ['method', 'route', 'status'] as const,
  buckets: LATENCY_BUCKETS,
  registers: [registry],
});

export const computeDuration = new client.Histogram({
  name: 'drumline_compute_task_seconds',
  help: 'Time of a compute-pool task (measure = read + check + score of an upload; reference; instrument-check; read; sha256; password), queue wait included',
  labelNames: ['task', 'outcome'] as const,
  buckets: LATENCY_BUCKETS,
  registers: [registry],
});

/** Times every request under its declared route (never the path with its ids: bounded label values). */
export function metricsMiddleware(): RequestHandler {
  return (req, res, next) => {
    const end = httpDuration.startTimer();
    res.on('finish', () => {
      end({ method: req.method, route: routeOf(req), status: `${Math.floor(res.statusCode / 100)}xx` });
    });
    next();
  };
}

let dbForGauges: Knex | null = null;

/** The database the scrape-time gauges read (set once by createApp). */
export function setMetricsDb(db: Knex): void {
  dbForGauges = db;
}

new client.Gauge({
  name: 'drumline_mail_outbox',
  help: 'Messages in the mail outbox by state (queued and sending are the depth still to deliver)',
  labelNames: ['status'] as const,
  registers: [registry],
  async collect() {
    this.reset();
    if (!dbForGauges) return;
    const rows = await dbForGauges('mail_outbox')
      .whereIn('status', ['queued', 'sending', 'failed'])
      .groupBy('status')
      .select('status')
      .count({ n: '*' });
    for (const s of ['queued', 'sending', 'failed']) this.set({ status: s }, 0);
    for (const r of rows) this.set({ status: r.status }, Number(r.n));
  },
});

new client.Gauge({
  name: 'drumline_certificates_pending',
  help: 'Lots that passed identity testing and have no certificate yet (docs/certificates.md)',
  registers: [registry],
  async collect() {
    if (!dbForGauges) return;
    const row = await dbForGauges('lot')
      .where({ identity_status: 'passed' })
      .whereNull('certificate_id')
      .count({ n: '*' })
      .first();
    this.set(Number(row?.n ?? 0));
  },
});

interface PoolLike {
  numUsed(): number;
  numFree(): number;
  numPendingAcquires(): number;
  max: number;
}

new client.Gauge({
  name: 'drumline_db_pool_connections',
  help: "This server's database connections by state (used, free, waiting requests, max)",
  labelNames: ['state'] as const,
  registers: [registry],
  collect() {
    const pool = (dbForGauges?.client as { pool?: PoolLike } | undefined)?.pool;
    if (!pool) return;
    this.set({ state: 'used' }, pool.numUsed());
    this.set({ state: 'free' }, pool.numFree());
    this.set({ state: 'pending' }, pool.numPendingAcquires());
    this.set({ state: 'max' }, pool.max);
  },
});

export async function metricsText(): Promise<{ contentType: string; body: string }> {
  return { contentType: registry.contentType, body: await registry.metrics() };
}
