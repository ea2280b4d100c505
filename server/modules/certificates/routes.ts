/** HTTP edge of identity certificates: list, metadata, download, verification, superseding, signing identity. */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { checkCertificateBytes } from '../integrity';
import { uploadMiddleware } from '../../lib/upload';
import { badRequest } from '../../lib/errors';
import { defineRoute, idParams } from '../../lib/http';
import { certificateListQuery, issueMissingSchema, supersedeSchema, verifyByNumberQuerySchema } from './contract';
import { setCertificateConfig, signingIdentity } from './config';
import { issueMissing, supersedeCertificate } from './issue';
import { downloadCertificate, getCertificate, listCertificates } from './reading';
import { pendingCertificates } from './retry';
import { verifyByNumber, verifyUpload } from './verification';

const QA = { roles: ['qa_manager'] as const };
const ADMIN = { roles: ['admin'] as const };

/** A date (YYYY-MM-DD, taken as a whole UTC day) to a Date; `end` gives the next midnight. */
function dayStart(d: string | undefined, end = false): Date | undefined {
  if (!d) return undefined;
  const t = new Date(`${d}T00:00:00.000Z`);
  if (Number.isNaN(t.getTime())) throw badRequest(`"${d}" is not a date.`);
  if (end) t.setUTCDate(t.getUTCDate() + 1);
  return t;
}

export function certificateRoutes(config: AppConfig): Router {
  setCertificateConfig(config);
  const r = Router();
  const upload = uploadMiddleware({ maxBytes: config.uploadMaxBytes, field: 'file' });

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
      listCertificates(getDb(), {
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
    () => signingIdentity(config),
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
      query: verifyByNumberQuerySchema,
    },
    ({ query, actor, ip }) => verifyByNumber(getDb(), query.number, actor, ip),
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
      return verifyUpload(getDb(), file.buffer, actor, ip);
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
      body: issueMissingSchema,
      status: 201,
    },
    ({ body, actor, ip }) => issueMissing(getDb(), body.lotId, actor, ip, config),
  );

  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/certificates/pending',
      summary: 'Passed lots still waiting for their certificate (reserved number, failures, last problem)',
      tag: 'certificates',
      // QA acts on the list; auditors read it, like every record state (docs/access.md)
      access: { roles: ['qa_manager', 'auditor'] as const },
    },
    () => pendingCertificates(getDb()),
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
    ({ params }) => getCertificate(getDb(), params.id),
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
    async ({ params, actor, user, ip, res }) => {
      const { meta, pdf } = await downloadCertificate(getDb(), params.id, actor, ip);
      // the SHA-256 of the bytes sent; a difference from the recorded one raises an integrity alert
      const sent = await checkCertificateBytes(getDb(), meta, pdf, { foundIn: 'download', user, ip });
      res.status(200);
      res.setHeader('Content-Type', 'application/pdf');
      res.setHeader('Content-Length', String(pdf.length));
      res.setHeader('Content-Disposition', `attachment; filename="${meta.number}.pdf"`);
      res.setHeader('X-Content-SHA256', sent);
      res.setHeader('X-Recorded-SHA256', meta.sha256);
      res.setHeader('X-Integrity', sent === meta.sha256 ? 'intact' : 'mismatch');
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
      supersedeCertificate(
        getDb(),
        { certificateId: params.id, reason: body.reason, user, credentials: body.signature, ip },
        config,
      ),
  );

  return r;
}
