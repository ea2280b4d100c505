/**
 * HTTP edge of the integrity sweep (docs/access.md): QA managers and auditors read alerts and runs
 * and ask for a sweep; QA managers sign alerts off; every reader of GMP records sees the alerts on
 * a record.
 */
import { Router } from 'express';
import { z } from 'zod';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import { alertListQuery, signOffSchema } from './contract';
import * as service from './service';

const OVERSIGHT = { roles: ['qa_manager', 'auditor'] as const };
const QA = { roles: ['qa_manager'] as const };
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };
const RECORD_TYPES = [
  'identity_test',
  'reference_spectrum',
  'instrument_check',
  'certificate',
  'investigation',
] as const;

export function integrityRoutes(): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/integrity/alerts',
      summary: 'Integrity alerts: open (default) or all, newest first',
      tag: 'integrity',
      access: OVERSIGHT,
      query: alertListQuery,
    },
    ({ query }) => service.listAlerts(getDb(), query.status),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/integrity/alerts/:id',
      summary: 'One integrity alert with the records it concerns and its sign-off',
      tag: 'integrity',
      access: OVERSIGHT,
      params: idParams,
    },
    ({ params }) => service.getAlert(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/integrity/alerts/:id/sign-off',
      summary: 'QA signs an integrity alert off, saying what was done (e-signature)',
      tag: 'integrity',
      access: QA,
      params: idParams,
      body: signOffSchema,
    },
    ({ params, body, user, ip }) => service.signOffAlert(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/integrity/records/:type/:id',
      summary:
        'The integrity alerts shown on one record (test, reference, instrument check, certificate, investigation)',
      tag: 'integrity',
      access: READERS,
      params: z.object({ type: z.enum(RECORD_TYPES), id: z.coerce.number().int().positive() }),
    },
    ({ params }) => service.alertsOnRecord(getDb(), params.type, params.id),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/integrity/runs',
      summary: 'The latest integrity sweeps with their progress and findings',
      tag: 'integrity',
      access: OVERSIGHT,
    },
    () => service.listRuns(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/integrity/runs',
      summary: 'Ask for an integrity sweep now (the background job runs it; answers the queued or running sweep)',
      tag: 'integrity',
      access: OVERSIGHT,
      status: 202,
    },
    ({ user, ip }) => service.requestSweep(getDb(), user, ip),
  );
  return r;
}
