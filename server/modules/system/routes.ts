/** Health, the OpenAPI document and the audit chain check. */
import { Router } from 'express';
import { getDb } from '../../lib/db';
import { defineRoute } from '../../lib/http';
import { buildOpenApi } from '../../lib/openapi';
import { verifyChain } from '../../lib/audit';
import type { Health } from './contract';

export function systemRoutes(): Router {
  const r = Router();
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
      summary: 'Walk the audit hash chain and report intact or the first broken event',
      tag: 'audit',
      access: { roles: ['auditor', 'qa_manager', 'admin'] },
    },
    () => verifyChain(getDb()),
  );
  return r;
}
