/** Health, the OpenAPI document and the audit chain check. */
import { Router } from 'express';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import { buildOpenApi } from '../../lib/openapi';
import type { AppConfig } from '../../lib/config';
import { checkChain, getChainRun, requestFullCheck } from '../audit/anchor';
import type { Health } from './contract';

const CHAIN_READERS = { roles: ['auditor', 'qa_manager', 'admin'] as const };

export function systemRoutes(config: AppConfig): Router {
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
