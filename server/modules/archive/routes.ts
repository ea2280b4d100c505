/** Archive routes: JCAMP-DX copies of stored spectra and a lot's complete record as one zip. */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import { measurementJcamp, referenceJcamp, sendLotArchive } from './service';

const JCAMP_TYPE = 'chemical/x-jcamp-dx';

export function archiveRoutes(config: AppConfig): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/measurements/:id/jcamp',
      summary: "The measurement's spectrum as JCAMP-DX 4.24 written by Drumline (AFFN), with its metadata",
      tag: 'archive',
      access: { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] },
      params: idParams,
      produces: JCAMP_TYPE,
    },
    async ({ params, res }) => {
      const j = await measurementJcamp(getDb(), params.id, config.siteName);
      res.setHeader('Content-Type', `${JCAMP_TYPE}; charset=utf-8`);
      res.setHeader('Content-Disposition', `attachment; filename="${j.name}"`);
      res.send(j.text);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/references/:id/jcamp',
      summary: 'A reference spectrum as JCAMP-DX 4.24 written by Drumline (AFFN), with its metadata',
      tag: 'archive',
      access: { roles: ['verifier', 'qa_manager', 'auditor'] },
      params: idParams,
      produces: JCAMP_TYPE,
    },
    async ({ params, res }) => {
      const j = await referenceJcamp(getDb(), params.id, config.siteName);
      res.setHeader('Content-Type', `${JCAMP_TYPE}; charset=utf-8`);
      res.setHeader('Content-Disposition', `attachment; filename="${j.name}"`);
      res.send(j.text);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/lots/:id/archive',
      summary:
        "A lot's complete record as one zip: raw files, JCAMP-DX copies, certificates, reviews, audit events (CSV, JSON), facts and a SHA-256 manifest",
      tag: 'archive',
      access: { roles: ['qa_manager', 'auditor'] },
      params: idParams,
      produces: 'application/zip',
    },
    async ({ params, res, actor, ip }) => {
      await sendLotArchive(getDb(), res, params.id, { actor, ip, siteName: config.siteName });
    },
  );
  return r;
}
