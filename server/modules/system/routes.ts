/** Health (live, ready), metrics, the OpenAPI document and the audit chain check. */
import crypto from 'node:crypto';
import { Router, type Request } from 'express';
import { migrations } from '../../../db/migrations/index';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import { isDraining } from '../../lib/lifecycle';
import { metricsText } from '../../lib/metrics';
import { buildOpenApi } from '../../lib/openapi';
import { checkChain, getChainRun, requestFullCheck } from '../audit';
import type { Health, Live, Ready } from './contract';

const CHAIN_READERS = { roles: ['auditor', 'qa_manager', 'admin'] as const };
/** Compares the migrations the database recorded with the ones this server was built with. */
export async function migrationState(): Promise<Pick<Ready, 'migrations' | 'missing' | 'unknown'>> {
  const rows = (await getDb()('knex_migrations').select('name')) as { name: string }[];
  const done = new Set(rows.map((r) => r.name));
  const known = new Set(migrations.map(([n]) => n));
  const missing = [...known].filter((n) => !done.has(n));
  const unknown = [...done].filter((n) => !known.has(n));
  if (missing.length) return { migrations: 'behind', missing };
  if (unknown.length) return { migrations: 'ahead', unknown };
  return { migrations: 'current' };
}

/** True when the request carries the scraper's bearer token (compared in constant time). */
function scrapeTokenOk(config: AppConfig, req: Request): boolean {
  const token = config.metricsToken;
  const m = /^Bearer (\S+)$/.exec(req.get('authorization') ?? '');
  if (!token || !m) return false;
  const a = crypto.createHash('sha256').update(m[1]).digest();
  const b = crypto.createHash('sha256').update(token).digest();
  return crypto.timingSafeEqual(a, b);
}

export function systemRoutes(config: AppConfig): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/live',
      summary: 'Liveness: the process answers (no database call)',
      tag: 'system',
      access: 'public',
    },
    (): Live => ({ status: 'live', uptimeSeconds: Math.round(process.uptime()) }),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/ready',
      summary: 'Readiness: the database answers and its migrations are current; 503 otherwise or while stopping',
      tag: 'system',
      access: 'public',
    },
    async ({ res }): Promise<Ready | undefined> => {
      let out: Ready;
      try {
        await getDb().raw('SELECT 1');
        const m = await migrationState();
        out = { status: m.migrations === 'current' ? 'ready' : 'not-ready', database: 'ok', ...m };
      } catch {
        out = { status: 'not-ready', database: 'down', migrations: 'unknown' };
      }
      if (isDraining()) out = { ...out, status: 'not-ready', draining: true };
      if (out.status === 'ready') return out;
      res.status(503).json(out);
      return;
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/metrics',
      summary:
        'Metrics in the Prometheus text format (administrators, or the scraper with METRICS_TOKEN as bearer token)',
      tag: 'system',
      access: { roles: ['admin'] },
      produces: 'text/plain',
      machineAccess: (req) => scrapeTokenOk(config, req),
    },
    async ({ res }) => {
      const m = await metricsText();
      res.setHeader('Content-Type', m.contentType);
      res.setHeader('Cache-Control', 'no-store');
      res.send(m.body);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/health',
      summary: 'Liveness and database reachability',
      tag: 'system',
      access: 'public',
    },
    async ({ res }): Promise<Health | undefined> => {
      try {
        await getDb().raw('SELECT 1');
        return { status: 'ok', database: 'ok' };
      } catch {
        res.status(503).json({ status: 'degraded', database: 'down' } satisfies Health);
        return;
      }
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/openapi.json',
      summary: 'This API as an OpenAPI 3.1 document',
      tag: 'system',
      access: 'public',
    },
    () => buildOpenApi(),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit/verify',
      summary:
        'Check the audit chain from the latest signed checkpoint on (incremental) and report intact or the first broken event',
      tag: 'audit',
      access: CHAIN_READERS,
    },
    () => checkChain(getDb(), config),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/audit/verify/full',
      summary: 'Start a full check of the audit chain against every checkpoint (a background job); audited',
      tag: 'audit',
      access: CHAIN_READERS,
      status: 202,
    },
    ({ user, ip }) => requestFullCheck(getDb(), user, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit/verify/full/:id',
      summary: 'Progress and result of a full chain check',
      tag: 'audit',
      access: CHAIN_READERS,
      params: idParams,
    },
    ({ params }) => getChainRun(getDb(), params.id),
  );
  return r;
}
