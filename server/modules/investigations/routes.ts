/**
 * HTTP edge of investigations: list, detail, phase I record, invalidate with retest, confirm and
 * reject; and investigations of trend signals: open from a signal (signed), conclude (signed).
 */
import { Router } from 'express';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import * as repo from './repo';
import {
  concludeSchema,
  confirmSchema,
  invalidateSchema,
  investigationListQuery,
  openFromSignalSchema,
  phase1Schema,
} from './contract';
import * as service from './service';

const QA = { roles: ['qa_manager'] as const };
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };

export function investigationRoutes(): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/investigations',
      summary: 'Investigations (open ones by default)',
      tag: 'investigations',
      access: READERS,
      query: investigationListQuery,
    },
    ({ query }) => repo.listInvestigations(getDb(), query),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/investigations/:id',
      summary: 'An investigation with failing containers, library hint, phase I record, decision and signatures',
      tag: 'investigations',
      access: READERS,
      params: idParams,
    },
    ({ params }) => service.getInvestigation(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/investigations/:id/phase1',
      summary: 'Record the signed phase I laboratory check',
      tag: 'investigations',
      access: QA,
      params: idParams,
      body: phase1Schema,
    },
    ({ params, body, user, ip }) => service.recordPhase1(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/investigations/:id/invalidate',
      summary:
        'Invalidate the result for an assignable laboratory cause and authorise a retest of named containers (signed)',
      tag: 'investigations',
      access: QA,
      params: idParams,
      body: invalidateSchema,
    },
    ({ params, body, user, ip }) => service.invalidateResult(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/investigations/:id/confirm',
      summary: 'Confirm the failure and reject the lot (signed)',
      tag: 'investigations',
      access: QA,
      params: idParams,
      body: confirmSchema,
    },
    ({ params, body, user, ip }) => service.confirmFailure(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/trending/signals/:id/investigation',
      summary: 'Open an investigation of an open trend signal (signed); the signal links to it',
      tag: 'investigations',
      access: QA,
      params: idParams,
      body: openFromSignalSchema,
      status: 201,
    },
    ({ params, body, user, ip }) => service.openFromSignal(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/investigations/:id/conclude',
      summary: 'Close an investigation of a trend signal with the signed conclusion',
      tag: 'investigations',
      access: QA,
      params: idParams,
      body: concludeSchema,
    },
    ({ params, body, user, ip }) => service.concludeTrend(getDb(), user, params.id, body, ip),
  );
  return r;
}
