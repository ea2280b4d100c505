/** HTTP edge of identity testing, verification and the work queue. */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb, must } from '../../lib/db';
import { sendCheckedFile } from '../integrity';
import { uploadMiddleware } from '../../lib/upload';
import { notFound } from '../../lib/errors';
import { defineRoute, idParams } from '../../lib/http';
import { listInstrumentStatuses } from './instrument-status';
import {
  matchFilesSchema,
  measurementFieldsSchema,
  performSchema,
  returnSchema,
  startTestSchema,
  switchInstrumentSchema,
  verifySchema,
} from './contract';
import * as service from './service';
import * as signing from './signing';
import * as views from './views';
import { handOverSchema, releaseBlockSchema } from '../provenance/contract';
import * as provenance from '../provenance';
import { recordHoldChange } from '../lots';

const OPERATOR = { roles: ['operator'] as const };
const VERIFIER = { roles: ['verifier'] as const };
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };
const HOLDER_OR_QA = { roles: ['operator', 'qa_manager'] as const };
const QA = { roles: ['qa_manager'] as const };
const QA_AND_AUDITOR = { roles: ['qa_manager', 'auditor'] as const };

export function testingRoutes(config: AppConfig): Router {
  const r = Router();
  const upload = uploadMiddleware({ maxBytes: config.uploadMaxBytes, field: 'file' });

  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/testing/instruments',
      summary: 'Active instruments with whether they may be used now (instrument check valid)',
      tag: 'testing',
      access: READERS,
    },
    () => listInstrumentStatuses(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/lots/:id/tests',
      summary: 'Start the next test attempt of a lot on an instrument with a valid instrument check',
      tag: 'testing',
      access: OPERATOR,
      params: idParams,
      body: startTestSchema,
      status: 201,
    },
    ({ params, body, user, ip }) => service.startTest(getDb(), user, params.id, body.instrumentId, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/verification/queue',
      summary: 'Tests awaiting verification that you may verify (not your own)',
      tag: 'testing',
      access: VERIFIER,
    },
    ({ user }) => views.verificationQueue(getDb(), user),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/tests/:id',
      summary: 'A test attempt with containers, measurements, readiness and signatures',
      tag: 'testing',
      access: READERS,
      params: idParams,
    },
    ({ params }) => views.getTestDetail(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'put',
      path: '/api/tests/:id/instrument',
      summary: 'Change the instrument of a test in progress',
      tag: 'testing',
      access: OPERATOR,
      params: idParams,
      body: switchInstrumentSchema,
    },
    async ({ params, body, user, ip }) => {
      await service.switchInstrument(getDb(), user, params.id, body.instrumentId, ip);
      return views.getTestDetail(getDb(), params.id);
    },
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/tests/:id/match-files',
      summary: 'Match file names to containers by the label in the name (stores nothing)',
      tag: 'testing',
      access: OPERATOR,
      params: idParams,
      body: matchFilesSchema,
    },
    ({ params, body }) => service.matchFiles(getDb(), params.id, body.fileNames),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/tests/:id/measurements',
      summary: 'Upload the spectrum of one container; it is scored at once and stored with its raw bytes and SHA-256',
      tag: 'testing',
      access: OPERATOR,
      params: idParams,
      upload,
      uploadFields: {
        file: 'the spectrum file (JCAMP-DX or CSV)',
        containerId: 'container id',
        label: 'or the scanned container label',
        reason: 'why a container with a valid result is measured again',
        confirmIdentifiers: '"true" to confirm a file that names another record',
      },
      body: measurementFieldsSchema,
      status: 201,
    },
    ({ params, body, req, user, ip }) =>
      service.addMeasurement(getDb(), user, params.id, body, req.file, ip, {
        maxInvalidMeasurements: config.maxInvalidMeasurements,
        fileIdentifierPolicy: config.fileIdentifierPolicy,
        siteTimeZone: config.siteTimeZone,
      }),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/tests/:id/perform',
      summary: 'Sign the test performed (every container has a valid result)',
      tag: 'testing',
      access: OPERATOR,
      params: idParams,
      body: performSchema,
    },
    async ({ params, body, user, ip }) => {
      await signing.perform(getDb(), user, params.id, body.signature, ip);
      return views.getTestDetail(getDb(), params.id);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/tests/:id/hand-over-candidates',
      summary: 'Active operators an attempt in progress can be handed over to',
      tag: 'testing',
      access: HOLDER_OR_QA,
      params: idParams,
    },
    ({ params }) => provenance.handOverCandidates(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/tests/:id/hand-over',
      summary: 'Hand an attempt in progress over to another operator (recorded and audited)',
      tag: 'testing',
      access: HOLDER_OR_QA,
      params: idParams,
      body: handOverSchema,
    },
    async ({ params, body, user, ip }) => {
      await provenance.handOver(getDb(), user, params.id, body, ip);
      return views.getTestDetail(getDb(), params.id);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/containers/blocked',
      summary: 'Containers blocked after too many invalid measurements, awaiting QA',
      tag: 'testing',
      access: QA_AND_AUDITOR,
    },
    () => provenance.blockedContainers(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/containers/:id/release',
      summary: 'Release a blocked container for further measurements (QA, signed)',
      tag: 'testing',
      access: QA,
      params: idParams,
      body: releaseBlockSchema,
    },
    async ({ params, body, user, ip }) => {
      // the container returns to its status before the block through the state machine
      await provenance.releaseBlock(getDb(), user, params.id, body, ip, recordHoldChange);
      return provenance.blockedContainers(getDb());
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/tests/:id/review',
      summary:
        'Everything a verifier reviews: every container in full, instrument checks, method and reference versions',
      tag: 'testing',
      access: READERS,
      params: idParams,
    },
    ({ params, user, ip }) => views.getReview(getDb(), params.id, { foundIn: 'review', user, ip }),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/tests/:id/verify',
      summary: 'Sign the test verified; decides the lot outcome in the same transaction',
      tag: 'testing',
      access: VERIFIER,
      params: idParams,
      body: verifySchema,
    },
    ({ params, body, user, ip }) => signing.verify(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/tests/:id/return',
      summary: 'Return the test to the operator with a reason (signed)',
      tag: 'testing',
      access: VERIFIER,
      params: idParams,
      body: returnSchema,
    },
    async ({ params, body, user, ip }) => {
      await signing.returnTest(getDb(), user, params.id, body, ip);
      return views.getTestDetail(getDb(), params.id);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/measurements/:id',
      summary: 'One measurement in full: result, criteria, bands, explanation, versions, instrument check',
      tag: 'testing',
      access: READERS,
      params: idParams,
    },
    ({ params }) => views.getMeasurementDetail(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/measurements/:id/plot',
      summary: 'Plot data: raw spectrum and the overlay of sample, best reference and difference',
      tag: 'testing',
      access: READERS,
      params: idParams,
    },
    ({ params }) => views.measurementPlot(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/measurements/:id/file',
      summary: 'The raw uploaded file, byte for byte',
      tag: 'testing',
      access: READERS,
      params: idParams,
      produces: 'application/octet-stream',
    },
    async ({ params, res, user, ip }) => {
      const db = getDb();
      const m = await db('measurement').where({ id: params.id }).first();
      if (!m) throw notFound('The measurement');
      const f = must(
        await db('stored_file').where({ id: m.file_id }).first(),
        `stored file ${m.file_id} of measurement ${m.id}`,
      );
      await sendCheckedFile(db, res, f, { foundIn: 'download', user, ip });
    },
  );
  return r;
}
