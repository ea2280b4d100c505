/** HTTP edge of identity certificates: list, metadata, download, verification, superseding, signing identity. */
import { Router } from 'express';
import multer from 'multer';
import { z } from 'zod';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { badRequest } from '../../lib/errors';
import { signatureInput } from '../../lib/esign';
import { defineRoute, idParams } from '../../lib/http';
import * as service from './service';

const QA = { roles: ['qa_manager'] as const };
const ADMIN = { roles: ['admin'] as const };

const dateParam = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'Use the date format YYYY-MM-DD.')
  .optional();

export const certificateListQuery = z.object({
  lot: z.string().trim().max(60).optional(),
  lotId: z.coerce.number().int().positive().optional(),
  material: z.string().trim().max(120).optional(),
  number: z.string().trim().max(40).optional(),
  from: dateParam,
  to: dateParam,
  limit: z.coerce.number().int().min(1).max(500).default(100),
  offset: z.coerce.number().int().min(0).default(0),
});

export const certificateNumberSchema = z
  .string()
  .trim()
  .min(1, 'Type the certificate number.')
  .max(40)
  .regex(/^IC-\d{4}-\d{5,}$/i, 'A certificate number looks like IC-2026-00042.');

export const supersedeSchema = z.object({
  reason: z.string().trim().min(10, 'Give the reason for the new certificate (at least 10 characters).').max(2000),
  signature: signatureInput,
});

/** A date (YYYY-MM-DD, taken as a whole UTC day) to a Date; `end` gives the next midnight. */
function dayStart(d: string | undefined, end = false): Date | undefined {
  if (!d) return undefined;
  const t = new Date(`${d}T00:00:00.000Z`);
  if (Number.isNaN(t.getTime())) throw badRequest(`"${d}" is not a date.`);
  if (end) t.setUTCDate(t.getUTCDate() + 1);
  return t;
}

export function certificateRoutes(config: AppConfig): Router {
  service.setCertificateConfig(config);
  const r = Router();
  const upload = multer({
    storage: multer.memoryStorage(),
    limits: { fileSize: config.uploadMaxBytes, files: 1 },
  }).single('file');

  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/certificates',
      summary: 'Identity certificates, newest first; search by lot, material, number and issue date',
      tag: 'certificates',
      access: 'authenticated',
      query: certificateListQuery,
    },
    ({ query }) =>
      service.listCertificates(getDb(), {
        lot: query.lot || undefined,
        lotId: query.lotId,
        material: query.material || undefined,
        number: query.number || undefined,
        from: dayStart(query.from),
        to: dayStart(query.to, true),
        limit: query.limit,
        offset: query.offset,
      }),
  );

  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/certificates/signing-identity',
      summary: 'The site signing certificate: SHA-256 fingerprint, subject, validity',
      tag: 'certificates',
      access: ADMIN,
    },
    () => service.signingIdentity(config),
  );

  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/certificates/verify',
      summary:
        'Verify a stored certificate by its number (bytes against the recorded SHA-256, embedded signature); audited',
      tag: 'certificates',
      access: 'authenticated',
      query: z.object({ number: certificateNumberSchema }),
    },
    ({ query, actor, ip }) => service.verifyByNumber(getDb(), query.number, actor, ip),
  );

  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/certificates/verify',
      summary:
        'Verify an uploaded certificate PDF: byte-identical to a stored certificate? embedded signature valid? which lot? Audited',
      description: 'Multipart: file = the PDF. Answers with verdict "authentic" or "not authentic" and the reasons.',
      tag: 'certificates',
      access: 'authenticated',
      upload,
      uploadFields: { file: 'The certificate PDF to check' },
    },
    ({ req, actor, ip }) => {
      const file = (req as unknown as { file?: Express.Multer.File }).file;
      if (!file) throw badRequest('Attach the certificate PDF as the field "file".');
      return service.verifyUpload(getDb(), file.buffer, actor, ip);
    },
  );

  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/certificates/issue',
      summary: 'Issue the certificate of a passed lot that has none yet (normally automatic after verification)',
      tag: 'certificates',
      access: QA,
      body: z.object({ lotId: z.number().int().positive() }),
      status: 201,
    },
    ({ body, actor, ip }) => service.issueMissing(getDb(), body.lotId, actor, ip, config),
  );

  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/certificates/:id',
      summary: 'Certificate metadata with the content it prints',
      tag: 'certificates',
      access: 'authenticated',
      params: idParams,
    },
    ({ params }) => service.getCertificate(getDb(), params.id),
  );

  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/certificates/:id/pdf',
      summary: 'Download the signed certificate PDF exactly as stored (audited)',
      tag: 'certificates',
      access: 'authenticated',
      params: idParams,
      produces: 'application/pdf',
    },
    async ({ params, actor, ip, res }) => {
      const { meta, pdf } = await service.downloadCertificate(getDb(), params.id, actor, ip);
      res.status(200);
      res.setHeader('Content-Type', 'application/pdf');
      res.setHeader('Content-Length', String(pdf.length));
      res.setHeader('Content-Disposition', `attachment; filename="${meta.number}.pdf"`);
      res.setHeader('X-Content-SHA256', meta.sha256);
      res.setHeader('Cache-Control', 'no-store');
      res.end(pdf);
    },
  );

  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/certificates/:id/supersede',
      summary: 'Issue a new certificate that supersedes this one (QA, with reason and e-signature); both stay readable',
      tag: 'certificates',
      access: QA,
      params: idParams,
      body: supersedeSchema,
      status: 201,
    },
    ({ params, body, user, ip }) =>
      service.supersedeCertificate(
        getDb(),
        { certificateId: params.id, reason: body.reason, user, credentials: body.signature, ip },
        config,
      ),
  );

  return r;
}
