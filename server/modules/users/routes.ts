/** HTTP edge of account administration (admin only). */
import { Router } from 'express';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import { resetPasswordSchema, unlockSchema, userCreateSchema, userUpdateSchema } from './contract';
import * as repo from './repo';
import * as service from './service';
import { notFound } from '../../lib/errors';

const ADMIN = { roles: ['admin'] as const };
export function userRoutes(): Router {
  const r = Router();
  defineRoute(
    r,
    { method: 'get', path: '/api/users', summary: 'List accounts', tag: 'users', access: ADMIN },
    async () => (await repo.listUsers(getDb())).map(repo.toPublicUser),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/users/directory',
      summary: 'Names and roles of active accounts (for filters)',
      tag: 'users',
      access: 'authenticated',
    },
    async () => (await repo.listUsers(getDb())).map((u) => ({ id: u.id, fullName: u.full_name, username: u.username })),
  );
  defineRoute(
    r,
    { method: 'get', path: '/api/users/:id', summary: 'One account', tag: 'users', access: ADMIN, params: idParams },
    async ({ params }) => {
      const u = await repo.findById(getDb(), params.id);
      if (!u) throw notFound('The account');
      return repo.toPublicUser(u);
    },
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/users',
      summary: 'Create an account (must change its password at first sign-in)',
      tag: 'users',
      access: ADMIN,
      body: userCreateSchema,
      status: 201,
    },
    ({ body, actor, ip }) => service.createUser(getDb(), actor, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'patch',
      path: '/api/users/:id',
      summary: 'Change name, e-mail, roles or active state',
      tag: 'users',
      access: ADMIN,
      params: idParams,
      body: userUpdateSchema,
    },
    ({ params, body, actor, ip }) => service.updateUser(getDb(), actor, params.id, body, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/users/:id/unlock',
      summary: 'Unlock an account locked after failed sign-ins',
      tag: 'users',
      access: ADMIN,
      params: idParams,
      body: unlockSchema,
    },
    ({ params, body, actor, ip }) => service.unlockUser(getDb(), actor, params.id, body.reason, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/users/:id/reset-password',
      summary: 'Set a temporary password that must be changed at next sign-in',
      tag: 'users',
      access: ADMIN,
      params: idParams,
      body: resetPasswordSchema,
    },
    ({ params, body, actor, ip }) =>
      service.resetPassword(getDb(), actor, params.id, body.temporaryPassword, body.reason, ip),
  );
  return r;
}
