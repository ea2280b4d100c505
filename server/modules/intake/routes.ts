/** HTTP edge of the export-folder intake (docs/instrument-intake.md). */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import { acquisitionListQuery, assignAcquisitionSchema, intakeSettingSchema, notASampleSchema } from './contract';
import * as service from './service';

const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };
const SETTERS = { roles: ['qa_manager', 'admin'] as const };
const OPERATOR = { roles: ['operator'] as const };
const QA_AND_AUDITOR = { roles: ['qa_manager', 'auditor'] as const };

export function intakeRoutes(config: AppConfig): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/instruments/:id/intake',
      summary: "An instrument's export folder, manual-upload switch and clock time zone, with their history",
      tag: 'intake',
      access: { roles: ['operator', 'verifier', 'qa_manager', 'auditor', 'admin'] as const },
      params: idParams,
    },
    ({ params }) => service.getIntakeSetting(getDb(), config, params.id),
  );
  defineRoute(
    r,
    {
      method: 'put',
      path: '/api/instruments/:id/intake',
      summary: "Set an instrument's export folder, manual-upload switch and clock time zone (a new record, audited)",
      tag: 'intake',
      access: SETTERS,
      params: idParams,
      body: intakeSettingSchema,
    },
    ({ params, body, user, ip }) => service.setIntakeSetting(getDb(), config, user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/instruments/:id/acquisitions',
      summary: "Files received from the instrument's export folder (?state=unassigned: those waiting for an operator)",
      tag: 'intake',
      access: READERS,
      params: idParams,
      query: acquisitionListQuery,
    },
    ({ params, query }) => service.instrumentAcquisitions(getDb(), config, params.id, query.state ?? 'all'),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/acquisitions/:id/assign',
      summary:
        'Assign an unassigned acquisition to a container of a test in progress (confirmed; stored as its measurement)',
      tag: 'intake',
      access: OPERATOR,
      params: idParams,
      body: assignAcquisitionSchema,
      status: 201,
    },
    ({ params, body, user, ip }) => service.assignAcquisition(getDb(), config, user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/acquisitions/:id/not-a-sample',
      summary: 'Mark an unassigned acquisition as not a sample, with a reason (audited)',
      tag: 'intake',
      access: OPERATOR,
      params: idParams,
      body: notASampleSchema,
    },
    async ({ params, body, user, ip }) => {
      await service.markNotASample(getDb(), user, params.id, body, ip);
      return { ok: true as const };
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/acquisitions/overdue',
      summary: 'Acquisitions left unassigned longer than the site setting (QA reconciliation)',
      tag: 'intake',
      access: QA_AND_AUDITOR,
    },
    () => service.overdueAcquisitions(getDb(), config),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/tests/:id/acquisitions',
      summary:
        "Every acquisition on the test's instrument during the test window, assigned or not, and its manual uploads",
      tag: 'intake',
      access: READERS,
      params: idParams,
    },
    ({ params }) => service.testAcquisitions(getDb(), config, params.id),
  );
  return r;
}
