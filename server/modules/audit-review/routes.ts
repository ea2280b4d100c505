/** HTTP edge of the periodic audit-trail review: exception lists, the signed review, list, PDF, due date. */
import { Router } from 'express';
import { getDb } from '../../lib/db';
import type { AppConfig } from '../../lib/config';
import { defineRoute, idParams } from '../../lib/http';
import { periodQuery, reviewSchema } from './contract';
import * as service from './service';

const QA = { roles: ['qa_manager'] as const };
const READERS = { roles: ['qa_manager', 'auditor'] as const };

export function auditReviewRoutes(config: AppConfig): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit-reviews',
      summary: 'Recorded audit-trail reviews, newest period first',
      tag: 'audit-review',
      access: READERS,
    },
    () => service.listReviews(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit-reviews/due',
      summary: 'Whether the periodic audit-trail review is due (site setting AUDIT_REVIEW_MONTHS)',
      tag: 'audit-review',
      access: READERS,
    },
    () => service.reviewDue(getDb(), config.auditReviewMonths),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit-reviews/exceptions',
      summary: 'The exception lists of a period, for the review',
      tag: 'audit-review',
      access: READERS,
      query: periodQuery,
    },
    ({ query }) => service.exceptionLists(getDb(), query.from, query.to),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit-reviews/:id',
      summary: 'One audit-trail review with its signature',
      tag: 'audit-review',
      access: READERS,
      params: idParams,
    },
    ({ params }) => service.getReview(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit-reviews/:id/pdf',
      summary: 'One audit-trail review as PDF',
      tag: 'audit-review',
      access: READERS,
      params: idParams,
      produces: 'application/pdf',
    },
    async ({ params, res }) => {
      const out = await service.reviewPdf(getDb(), params.id, {
        siteName: config.siteName,
        timeZone: config.siteTimeZone,
      });
      res.status(200);
      res.setHeader('Content-Type', 'application/pdf');
      res.setHeader('Content-Disposition', `attachment; filename="${out.fileName}"`);
      res.setHeader('Cache-Control', 'no-store');
      res.end(out.pdf);
    },
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/audit-reviews',
      summary: 'Record the signed audit-trail review of a period',
      tag: 'audit-review',
      access: QA,
      body: reviewSchema,
      status: 201,
    },
    ({ body, user, ip }) => service.recordReview(getDb(), user, body, ip),
  );
  return r;
}
