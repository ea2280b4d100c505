/**
 * HTTP edge of the instrument registry (docs/access.md). Operators, verifiers, QA and auditors
 * read; qa_manager registers instruments and approves check specifications; operators record
 * instrument checks. An auditor changes nothing here; the administrator has no business here.
 */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { sendCheckedFile } from '../integrity';
import { uploadMiddleware } from '../../lib/upload';
import { defineRoute, idParams } from '../../lib/http';
import {
  backInServiceSchema,
  impactDecisionSchema,
  impactListQuerySchema,
  maintenanceSchema,
  outOfServiceSchema,
  qualificationSchema,
  checkParamsSchema,
  checkUploadFieldsSchema,
  instrumentCreateSchema,
  instrumentUpdateSchema,
  specApprovalSchema,
} from './contract';
import * as checks from './checks';
import * as lifecycle from './lifecycle';
import * as lookback from './lookback';
import * as registry from './registry';
import * as specifications from './specifications';

const QA = { roles: ['qa_manager'] as const };
/** Operators run the instrument check before measuring (docs/access.md); QA approves its specification. */
const CHECKERS = { roles: ['operator'] as const };
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };
/** Who works at the bench: records maintenance and takes an instrument out of service (docs/access.md). */
const BENCH = { roles: ['operator', 'verifier', 'qa_manager'] as const };

export function instrumentRoutes(config: AppConfig): Router {
  const r = Router();
  const upload = uploadMiddleware({ maxBytes: config.uploadMaxBytes, field: 'file' });

  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/instruments',
      summary: 'Instruments with their check status ("check due")',
      tag: 'instruments',
      access: READERS,
    },
    () => registry.listInstruments(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/instruments/:id',
      summary: 'One instrument with its check specifications and check history',
      tag: 'instruments',
      access: READERS,
      params: idParams,
    },
    ({ params }) => registry.getInstrument(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/instruments',
      summary: 'Register an instrument (mid-IR: Ph. Eur. 2.2.24 FT check specification by default)',
      tag: 'instruments',
      access: QA,
      body: instrumentCreateSchema,
      status: 201,
    },
    ({ body, actor, ip }) => registry.createInstrument(getDb(), actor, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'patch',
      path: '/api/instruments/:id',
      summary: 'Change an instrument (audited with a reason)',
      tag: 'instruments',
      access: QA,
      params: idParams,
      body: instrumentUpdateSchema,
    },
    ({ params, body, actor, ip }) => registry.updateInstrument(getDb(), actor, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/instruments/:id/specs',
      summary:
        'Approve a new check specification (site positions and tolerances, or a pharmacopoeial column) with a justification and e-signature',
      tag: 'instruments',
      access: QA,
      params: idParams,
      body: specApprovalSchema,
      status: 201,
    },
    async ({ params, body, user, ip }) => {
      await specifications.approveSpec(getDb(), user, params.id, { ...body.spec, signature: body.signature }, ip);
      return registry.getInstrument(getDb(), params.id);
    },
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/instruments/:id/checks',
      summary:
        'Record an instrument check (polystyrene, ATR blank, noise, NIR wavelength or photometric noise; signed by the performer)',
      description:
        'Multipart: file = the spectrum; checkType (default polystyrene); password (and username at the first signing of a session) = the e-signature. 422 with the reason when the file cannot be read; nothing is stored then. A failing check opens the look-back (an impact assessment).',
      tag: 'instruments',
      access: CHECKERS,
      params: idParams,
      upload,
      uploadFields: {
        file: 'check spectrum (JCAMP-DX or delimited text)',
        checkType: 'polystyrene | atr-blank | noise | nir-wavelength | nir-photometric-noise',
        password: 'your password (e-signature)',
        username: 'your user name (first signing of a session)',
      },
      body: checkUploadFieldsSchema,
      status: 201,
    },
    ({ req, params, body, user, ip }) =>
      checks.recordCheck(getDb(), user, params.id, body.checkType, req.file, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/instruments/:id/checks/:checkId/file',
      summary: 'The raw file of an instrument check, byte for byte',
      tag: 'instruments',
      access: READERS,
      params: checkParamsSchema,
      produces: 'application/octet-stream',
    },
    async ({ params, res, user, ip }) => {
      const f = await checks.checkFile(getDb(), params.id, params.checkId);
      await sendCheckedFile(getDb(), res, f, { foundIn: 'download', user, ip });
    },
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/instruments/:id/qualifications',
      summary:
        'Record a qualification (IQ, OQ, PQ, requalification) with its documents, dates and status, signed by QA',
      tag: 'instruments',
      access: QA,
      params: idParams,
      body: qualificationSchema,
      status: 201,
    },
    async ({ params, body, user, ip }) => {
      await lifecycle.recordQualification(getDb(), user, params.id, body, ip);
      return registry.getInstrument(getDb(), params.id);
    },
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/instruments/:id/maintenance',
      summary: 'Add an entry to the maintenance log (append-only, audited)',
      tag: 'instruments',
      access: BENCH,
      params: idParams,
      body: maintenanceSchema,
      status: 201,
    },
    async ({ params, body, actor, ip }) => {
      await lifecycle.recordMaintenance(getDb(), actor, params.id, body, ip);
      return registry.getInstrument(getDb(), params.id);
    },
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/instruments/:id/out-of-service',
      summary: 'Take an instrument out of service with a reason (no test starts or measures on it)',
      tag: 'instruments',
      access: BENCH,
      params: idParams,
      body: outOfServiceSchema,
    },
    async ({ params, body, actor, ip }) => {
      await lifecycle.takeOutOfService(getDb(), actor, params.id, body.reason, ip);
      return registry.getInstrument(getDb(), params.id);
    },
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/instruments/:id/back-in-service',
      summary: 'Put an instrument back into service (QA, reason and e-signature; every required check must pass again)',
      tag: 'instruments',
      access: QA,
      params: idParams,
      body: backInServiceSchema,
    },
    async ({ params, body, user, ip }) => {
      await lifecycle.putBackInService(getDb(), user, params.id, body, ip);
      return registry.getInstrument(getDb(), params.id);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/impact-assessments',
      summary: 'Impact assessments opened by failed instrument checks (look-back)',
      tag: 'instruments',
      access: READERS,
      query: impactListQuerySchema,
    },
    ({ query }) => lookback.listAssessments(getDb(), query.status),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/impact-assessments/:id',
      summary: 'One impact assessment: the measurements since the last passing check, the notices, the decision',
      tag: 'instruments',
      access: READERS,
      params: idParams,
    },
    ({ params }) => lookback.getAssessment(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/impact-assessments/:id/decision',
      summary: 'Close an impact assessment: no impact, or retest of named containers (QA e-signature)',
      tag: 'instruments',
      access: QA,
      params: idParams,
      body: impactDecisionSchema,
    },
    ({ params, body, user, ip }) => lookback.decideAssessment(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/lots/:id/impact-notices',
      summary: 'Notices of failed instrument checks on a lot and its certificates (the certificates stay unchanged)',
      tag: 'instruments',
      access: READERS,
      params: idParams,
    },
    ({ params }) => lookback.lotNotices(getDb(), params.id),
  );
  return r;
}
