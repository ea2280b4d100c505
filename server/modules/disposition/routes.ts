/** HTTP edge of the material master for disposition, the release checks of a lot and QA's disposition. */
import { Router } from 'express';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import type { AppConfig } from '../../lib/config';
import { lotCheckSchema, profileSchema, rejectSchema, releaseSchema, retestSchema } from './contract';
import * as retest from './retest';
import * as profile from './profile';
import * as service from './service';

const QA = { roles: ['qa_manager'] as const };
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };

export function dispositionRoutes(config: AppConfig): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/material-profiles',
      summary: 'Retest interval, shelf life, risk class and release checks of every active material',
      tag: 'disposition',
      access: READERS,
    },
    () => profile.listProfiles(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/material-profiles/:id',
      summary: "A material's disposition profile (current version and history); :id is the material",
      tag: 'disposition',
      access: READERS,
      params: idParams,
    },
    ({ params }) => profile.profileView(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/material-profiles/:id',
      summary: 'Approve a new version of the disposition profile of a material (QA, signed)',
      tag: 'disposition',
      access: QA,
      params: idParams,
      body: profileSchema,
      status: 201,
    },
    ({ params, body, user, ip }) => profile.saveProfile(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/lots/:id/disposition',
      summary: "A lot's release conditions, recorded checks and QA's decision",
      tag: 'disposition',
      access: READERS,
      params: idParams,
    },
    ({ params }) => service.dispositionView(getDb(), params.id),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/lots/:id/checks',
      summary: 'Record a release check of the material profile for a lot (signed)',
      tag: 'disposition',
      access: { roles: ['operator', 'qa_manager'] as const },
      params: idParams,
      body: lotCheckSchema,
      status: 201,
    },
    ({ params, body, user, ip }) => service.recordCheck(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/lots/:id/release',
      summary: 'Release the lot (QA, signed "released"); refused while any condition is open; sets the retest date',
      tag: 'disposition',
      access: QA,
      params: idParams,
      body: releaseSchema,
    },
    ({ params, body, user, ip }) => service.release(getDb(), user, params.id, body, ip, config.siteTimeZone),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/lots/:id/reject',
      summary: 'Reject the lot (QA, signed, with a reason)',
      tag: 'disposition',
      access: QA,
      params: idParams,
      body: rejectSchema,
    },
    ({ params, body, user, ip }) => service.reject(getDb(), user, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/lots/:id/retest',
      summary:
        'Start the retest of a released lot (QA, signed, with a reason): back to quarantine for a new identity test under the current method',
      tag: 'disposition',
      access: QA,
      params: idParams,
      body: retestSchema,
    },
    async ({ params, body, user, ip }) => {
      await retest.startRetest(getDb(), user, params.id, body, ip);
      return service.dispositionView(getDb(), params.id);
    },
  );
  return r;
}
