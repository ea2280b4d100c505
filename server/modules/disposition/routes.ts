/** HTTP edge of the material master for disposition, the release checks of a lot and QA's disposition. */
import { Router } from 'express';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import { profileSchema } from './contract';
import * as profile from './profile';

const QA = { roles: ['qa_manager'] as const };
const READERS = { roles: ['operator', 'verifier', 'qa_manager', 'auditor'] as const };

export function dispositionRoutes(): Router {
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
  return r;
}
