/**
 * HTTP edge of the lot record: register a received lot (answered with its record) and a lot's
 * record page. Mounted after lots' routes, so that /api/lots/receivable-materials is matched first.
 */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import { lotCreateSchema } from './contract';
import * as service from './service';

const OPERATOR = { roles: ['operator'] as const };
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };

export function lotRecordRoutes(config: AppConfig): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/lots',
      summary: 'Register a received lot (quarantine) and create its labelled containers',
      tag: 'lots',
      access: OPERATOR,
      body: lotCreateSchema,
      status: 201,
    },
    ({ body, actor, ip }) => service.receiveLotRecord(getDb(), actor, body, ip, config.siteTimeZone),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/lots/:id',
      summary: 'A lot with its containers, test attempts, investigations and certificate state',
      tag: 'lots',
      access: READERS,
      params: idParams,
    },
    ({ params }) => service.getLotDetail(getDb(), params.id),
  );
  return r;
}
