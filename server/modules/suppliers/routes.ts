/** HTTP edge of the supplier master: suppliers, sources of a material, qualification status. */
import { Router } from 'express';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import * as repo from './repo';
import { sourceCreateSchema, sourceListQuery, sourceStatusSchema, supplierCreateSchema } from './contract';
import * as service from './service';

const QA = { roles: ['qa_manager'] as const };
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };

export function supplierRoutes(): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/suppliers',
      summary: 'Suppliers and manufacturers',
      tag: 'suppliers',
      access: READERS,
    },
    () => repo.listSuppliers(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/suppliers',
      summary: 'Record a supplier or manufacturer (QA, signed)',
      tag: 'suppliers',
      access: QA,
      body: supplierCreateSchema,
      status: 201,
    },
    ({ body, user, ip }) => service.createSupplier(getDb(), user, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/sources',
      summary: 'Approved sources of materials with their qualification status and history',
      tag: 'suppliers',
      access: READERS,
      query: sourceListQuery,
    },
    ({ query }) => repo.listSources(getDb(), query),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/sources',
      summary: 'Record a source of a material (supplier, optionally its manufacturer); status new (QA, signed)',
      tag: 'suppliers',
      access: QA,
      body: sourceCreateSchema,
      status: 201,
    },
    ({ body, user, ip }) => service.createSource(getDb(), user, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/sources/:id/status',
      summary: 'Set the qualification status, conditions and sampling plan of a source (QA, signed)',
      tag: 'suppliers',
      access: QA,
      params: idParams,
      body: sourceStatusSchema,
    },
    ({ params, body, user, ip }) => service.setSourceStatus(getDb(), user, params.id, body, ip),
  );
  return r;
}
