/**
 * HTTP edge of lot receipt: receivable grades, list, label sheet PDF. Registering a lot and the
 * lot's record page answer with the whole record, so they live in server/modules/lot-record.
 */
import { Router } from 'express';
import { auditNow } from '../../lib/audit';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { notFound } from '../../lib/errors';
import { defineRoute, idParams } from '../../lib/http';
import { labelSheetPdf } from './labels-pdf';
import { setPublicUrl } from '../../lib/links';
import * as repo from './repo';
import { lotListQuerySchema } from './contract';
import * as service from './service';

const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };

export function lotRoutes(config: AppConfig): Router {
  setPublicUrl(config.publicUrl);
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/lots/receivable-materials',
      summary: 'Material grades a lot can be received for (approved method and reference)',
      tag: 'lots',
      access: READERS,
    },
    () => service.receivableMaterials(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/lots',
      summary: 'Lots, newest first',
      tag: 'lots',
      access: READERS,
      query: lotListQuerySchema,
    },
    ({ query }) => service.listLots(getDb(), query),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/lots/:id/labels.pdf',
      summary: 'Container label sheet (PDF, QR code and text per container)',
      tag: 'lots',
      access: READERS,
      params: idParams,
      produces: 'application/pdf',
    },
    async ({ params, res, user, ip }) => {
      const db = getDb();
      const lot = await repo.findLot(db, params.id);
      if (!lot) throw notFound('The lot');
      const containers = await repo.containersOf(db, params.id);
      const pdf = await labelSheetPdf(lot, containers, user.fullName, config.siteName);
      await auditNow(db, {
        actor: { id: user.id, name: user.fullName },
        action: 'lot.labels-printed',
        entityType: 'lot',
        entityId: lot.id,
        after: { labels: containers.length },
        ip,
      });
      res.setHeader('Content-Type', 'application/pdf');
      res.setHeader('Content-Disposition', `inline; filename="labels-${lot.lotNumber}.pdf"`);
      res.send(pdf);
    },
  );
  return r;
}
