/** HTTP edge of account administration (admin only) and the person directory (active accounts, any role). */
import { Router } from 'express';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import {
  confirmRoleChangeSchema,
  declineRoleChangeSchema,
  resetPasswordSchema,
  unlockSchema,
  userCreateSchema,
  userUpdateSchema,
  type DirectoryEntry,
} from './contract';
import * as grants from './grants';
import * as repo from './repo';
import * as service from './service';
import { notFound } from '../../lib/errors';

const ADMIN = { roles: ['admin'] as const };
export function userRoutes(): Router {
  const r = Router();
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/users',
      summary: 'List accounts, each with the role change that waits for confirmation',
      tag: 'users',
      access: ADMIN,
    },
    () => repo.listUsersWithPending(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/users/directory',
      summary: 'Active accounts with the fields a person picker needs (id, name, user name)',
      tag: 'users',
      access: 'authenticated',
    },
    async () =>
      (await repo.listUsers(getDb()))
        .filter((u) => u.active)
        .map((u): DirectoryEntry => ({ id: u.id, fullName: u.full_name, username: u.username })),
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/users/role-changes',
      summary: 'Role changes waiting for a second administrator (two-person rule)',
      tag: 'users',
      access: ADMIN,
    },
    () => grants.roleChangesWaiting(getDb()),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/users/role-changes/:id/confirm',
      summary: "Confirm another administrator's role change with an e-signature (grants the roles)",
      tag: 'users',
      access: ADMIN,
      params: idParams,
      body: confirmRoleChangeSchema,
    },
    ({ params, body, user, ip }) => grants.confirmRoleChange(getDb(), user, params.id, body.signature, ip),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/users/role-changes/:id/decline',
      summary: 'Decline a role change (or withdraw your own request), with a reason',
      tag: 'users',
      access: ADMIN,
      params: idParams,
      body: declineRoleChangeSchema,
    },
    ({ params, body, actor, ip }) => grants.declineRoleChange(getDb(), actor, params.id, body.reason, ip),
  );
  defineRoute(
    r,
    { method: 'get', path: '/api/users/:id', summary: 'One account', tag: 'users', access: ADMIN, params: idParams },
    async ({ params }) => {
      const u = await repo.findById(getDb(), params.id);
      if (!u) throw notFound('The account');
      const [pending] = await repo.pendingRoleChanges(getDb(), u.id);
      return repo.toPublicUser(u, pending ?? null);
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
      summary:
        "Change name, e-mail, roles or active state of another account (QA manager, verifier and administrator wait for a second administrator's confirmation)",
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
