/**
 * HTTP edge of the audit trail browser (issue 7): list with filters and keyset paging, one
 * event with before/after, filter choices, CSV and PDF export, and the history of one record.
 * The chain check stays at GET /api/audit/verify (server/modules/system/routes.ts).
 * Everything here is read-only except the 'audit.exported' event an export appends.
 */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import * as service from './service';
import { auditFilterSchema, auditListQuerySchema, historyParamsSchema } from './contract';

const TRAIL = { roles: ['auditor', 'qa_manager', 'admin'] as const };
const SCOPE_NOTE =
  'Auditors and QA managers see every event; administrators only account and sign-in events (record type "user").';

export function auditRoutes(config: AppConfig): Router {
  const r = Router();
  const ctx = (c: {
    user: service.ExportContext['user'];
    actor: service.ExportContext['actor'];
    ip: string | null;
  }): service.ExportContext => ({
    user: c.user,
    actor: c.actor,
    ip: c.ip,
    siteName: config.siteName,
    siteTimeZone: config.siteTimeZone,
  });

  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit/events',
      summary: 'Audit events, filtered, newest or oldest first, one page at a time (keyset cursor)',
      description: `${SCOPE_NOTE} "to" is exclusive. The total is counted on the first page only and capped (exact=false means "more than").`,
      tag: 'audit',
      access: TRAIL,
      query: auditListQuerySchema,
    },
    ({ user, query }) => service.listEvents(getDb(), user, query),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit/events/:id',
      summary: 'One audit event with its before and after values, field by field',
      description: SCOPE_NOTE,
      tag: 'audit',
      access: TRAIL,
      params: idParams,
    },
    ({ user, params }) => service.getEvent(getDb(), user, params.id),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit/facets',
      summary: 'Action names, record types and users that occur in the trail (filter choices)',
      tag: 'audit',
      access: TRAIL,
    },
    ({ user }) => service.getFacets(getDb(), user),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit/export.csv',
      summary: 'The filtered trail as CSV, streamed (every matching event; the export is itself audited)',
      description: SCOPE_NOTE,
      tag: 'audit',
      access: TRAIL,
      query: auditFilterSchema,
      produces: 'text/csv',
    },
    async ({ user, actor, ip, query, res }) => {
      await service.exportCsv(getDb(), ctx({ user, actor, ip }), query, res);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/audit/export.pdf',
      summary: 'The filtered trail as a PDF report with the filter stated (capped; the export is itself audited)',
      description: SCOPE_NOTE,
      tag: 'audit',
      access: TRAIL,
      query: auditFilterSchema,
      produces: 'application/pdf',
    },
    async ({ user, actor, ip, query, res }) => {
      const out = await service.exportPdf(getDb(), ctx({ user, actor, ip }), query);
      res.status(200);
      res.setHeader('Content-Type', 'application/pdf');
      res.setHeader('Content-Disposition', `attachment; filename="${out.fileName}"`);
      res.setHeader('Cache-Control', 'no-store');
      res.setHeader('X-Audit-Export-Event', String(out.eventId));
      res.end(out.pdf);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/history/:entityType/:entityId',
      summary: "One record's audit events in time order, with the e-signatures on it",
      description:
        'Auditors and QA managers: any record. Operators and verifiers: GMP records (not accounts). Administrators: accounts only. At most 1,000 events (the oldest); the browser holds the rest.',
      tag: 'audit',
      access: 'authenticated',
      params: historyParamsSchema,
    },
    ({ user, params }) => service.recordHistory(getDb(), user, params.entityType, params.entityId),
  );
  return r;
}
