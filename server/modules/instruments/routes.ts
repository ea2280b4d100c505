/**
 * HTTP edge of the instrument registry (docs/access.md). Operators, verifiers, QA and auditors
 * read; qa_manager registers instruments and approves check specifications; operators record
 * instrument checks. An auditor changes nothing here; the administrator has no business here.
 */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { sendCheckedFile } from '../integrity/service';
import { uploadMiddleware } from '../../lib/upload';
import { defineRoute, idParams } from '../../lib/http';
import {
  checkParamsSchema,
  checkUploadFieldsSchema,
  instrumentCreateSchema,
  instrumentUpdateSchema,
  specApprovalSchema,
} from './contract';
import * as checks from './checks';
import * as registry from './registry';
import * as specifications from './specifications';

const QA = { roles: ['qa_manager'] as const };
/** Operators run the instrument check before measuring (docs/access.md); QA approves its specification. */
const CHECKERS = { roles: ['operator'] as const };
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };

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
      summary: 'Record an instrument check from a polystyrene film spectrum (signed by the performer)',
      description:
        'Multipart: file = the spectrum; password (and username at the first signing of a session) = the e-signature. 422 with the reason when the file cannot be read; nothing is stored then.',
      tag: 'instruments',
      access: CHECKERS,
      params: idParams,
      upload,
      uploadFields: {
        file: 'polystyrene film spectrum (JCAMP-DX or delimited text)',
        password: 'your password (e-signature)',
        username: 'your user name (first signing of a session)',
      },
      body: checkUploadFieldsSchema,
      status: 201,
    },
    ({ req, params, body, user, ip }) => checks.recordCheck(getDb(), user, params.id, req.file, body, ip),
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
  return r;
}
