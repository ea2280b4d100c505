/** HTTP edge of sampling and container status: line clearance, sampling record, status labels. */
import { Router } from 'express';
import { auditNow } from '../../lib/audit';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { notFound } from '../../lib/errors';
import { defineRoute, idParams } from '../../lib/http';
import * as lots from '../lots/repo';
import { lineClearanceSchema, samplingSchema } from './contract';
import { statusLabelsPdf, type StatusLabel } from './labels-pdf';
import * as service from './service';
import { currentStatuses, holdsOf, statusHistory } from './status';

const OPERATOR = { roles: ['operator'] as const };
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };

export function samplingRoutes(config: AppConfig): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/lots/:id/sampling',
      summary: "A lot's sampling plan, line clearances, sampling record and each container's status history",
      tag: 'sampling',
      access: READERS,
      params: idParams,
    },
    ({ params }) => service.samplingView(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/lots/:id/line-clearance',
      summary: 'Record the signed line clearance of the sampling booth before this lot',
      tag: 'sampling',
      access: OPERATOR,
      params: idParams,
      body: lineClearanceSchema,
      status: 201,
    },
    ({ params, body, user, ip }) => service.recordLineClearance(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/lots/:id/sampling',
      summary: 'Record the signed sampling of a lot: sampler, area, time, tool, containers, reserve samples',
      tag: 'sampling',
      access: OPERATOR,
      params: idParams,
      body: samplingSchema,
      status: 201,
    },
    ({ params, body, user, ip }) => service.recordSampling(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/lots/:id/status-labels.pdf',
      summary: "Status labels (PDF) of a lot's containers: the current status of each, or of one status change",
      tag: 'sampling',
      access: READERS,
      params: idParams,
      produces: 'application/pdf',
    },
    async ({ params, req, res, user, ip }) => {
      const db = getDb();
      const lot = await lots.findLot(db, params.id);
      if (!lot) throw notFound('The lot');
      const containers = await lots.containersOf(db, params.id);
      const history = await statusHistory(db, params.id);
      const change = Number(req.query.change ?? 0) || null;
      // the current label shows the status as decided in one place (status.ts), with the hold that blocks it
      const current = await currentStatuses(db, params.id);
      const holds = await holdsOf(db, params.id);
      const rows = change
        ? history.filter((h) => h.id === change)
        : containers.map((c) => {
            const last = [...history].reverse().find((h) => h.containerId === c.id);
            const status = current.get(c.id) ?? 'quarantine';
            if (last && last.status === status) return last;
            return {
              id: 0,
              containerId: c.id,
              label: c.label,
              status,
              reason: status === 'blocked' ? (holds.get(c.id) ?? []).join('; ') : (last?.reason ?? null),
              changedBy: last?.changedBy ?? lot.createdBy,
              changedAt: last?.changedAt ?? lot.createdAt,
            };
          });
      if (!rows.length) throw notFound('The status change');
      const seqOf = new Map(containers.map((c) => [c.id, c.seq]));
      const labels: StatusLabel[] = rows.map((h) => ({
        containerLabel: h.label,
        seq: seqOf.get(h.containerId) ?? 0,
        containerCount: lot.containerCount,
        lotNumber: lot.lotNumber,
        material: { code: lot.material.code, name: lot.material.name },
        supplierLot: lot.supplierLot,
        status: h.status,
        changedAt: h.changedAt,
        changedBy: h.changedBy?.name ?? null,
        reason: h.reason,
      }));
      const pdf = await statusLabelsPdf(labels, config.siteName, config.siteTimeZone);
      await auditNow(db, {
        actor: { id: user.id, name: user.fullName },
        action: 'lot.status-labels-printed',
        entityType: 'lot',
        entityId: lot.id,
        after: { labels: labels.map((l) => `${l.containerLabel} ${l.status}`), change },
        ip,
      });
      res.setHeader('Content-Type', 'application/pdf');
      res.setHeader('Content-Disposition', `inline; filename="status-labels-${lot.lotNumber}.pdf"`);
      res.send(pdf);
    },
  );
  return r;
}
