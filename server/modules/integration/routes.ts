/** HTTP edge of the ERP/LIMS link: machine accounts and webhooks (administrator), ERP routes (machine tokens). */
import { Router } from 'express';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import {
  erpLotParams,
  erpReceiptSchema,
  machineAccountCreateSchema,
  machineAccountRevokeSchema,
  webhookCreateSchema,
} from './contract';
import * as service from './service';

const ADMIN = { roles: ['admin'] as const };

export function integrationRoutes(config: AppConfig): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/machine-accounts',
      summary: 'Machine accounts (ERP, LIMS)',
      tag: 'integration',
      access: ADMIN,
    },
    () => service.listMachineAccounts(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/machine-accounts',
      summary: 'Make a machine account; its API token is shown once and stored only as a hash',
      tag: 'integration',
      access: ADMIN,
      body: machineAccountCreateSchema,
      status: 201,
    },
    ({ body, user, ip }) => service.createMachineAccount(getDb(), user, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/machine-accounts/:id/revoke',
      summary: 'Revoke the token of a machine account (for good)',
      tag: 'integration',
      access: ADMIN,
      params: idParams,
      body: machineAccountRevokeSchema,
    },
    ({ params, body, user, ip }) => service.revokeMachineAccount(getDb(), user, params.id, body.reason, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/webhooks',
      summary: 'Webhook endpoints with their delivery counts',
      tag: 'integration',
      access: ADMIN,
    },
    () => service.listEndpoints(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/webhooks',
      summary: 'Add a webhook endpoint; its signing secret is shown once',
      tag: 'integration',
      access: ADMIN,
      body: webhookCreateSchema,
      status: 201,
    },
    ({ body, user, ip }) => service.createEndpoint(getDb(), user, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/webhooks/:id/deactivate',
      summary: 'Stop sending to a webhook endpoint',
      tag: 'integration',
      access: ADMIN,
      params: idParams,
    },
    ({ params, user, ip }) => service.deactivateEndpoint(getDb(), user, params.id, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/webhook-deliveries',
      summary: 'Webhook deliveries, newest first, with their state (pending, delivered, failed)',
      tag: 'integration',
      access: ADMIN,
    },
    () => service.listDeliveries(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/erp/receipts',
      summary: "Goods receipt from the ERP: creates the lot (quarantine), idempotent by the ERP's receipt number",
      tag: 'erp',
      access: { machine: 'lots:receive' },
      body: erpReceiptSchema,
      status: 201,
    },
    async ({ body, machine, ip, res }) => {
      const out = await service.erpReceive(getDb(), machine!, body, ip, config.siteTimeZone);
      res.status(out.status).json(out.lot);
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/erp/lots/:lotNumber',
      summary: 'A lot as the ERP reads it: status, identity, containers, certificate, retest date',
      tag: 'erp',
      access: { machine: 'lots:read' },
      params: erpLotParams,
    },
    ({ params }) => service.erpLotByNumber(getDb(), params.lotNumber),
  );
  return r;
}
