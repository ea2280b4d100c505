/** HTTP edge of account administration (admin only) and the person directory (active accounts, any role). */
import { Router } from 'express';
import { z } from 'zod';
import { getDb } from '../../lib/db';
import { defineRoute, idParams } from '../../lib/http';
import { ROLES } from '../../lib/roles';
import { signatureInput } from '../../lib/esign';
import * as grants from './grants';
import * as repo from './repo';
import * as service from './service';
import { notFound } from '../../lib/errors';

const ADMIN = { roles: ['admin'] as const };
const reason = z.string().trim().min(3, 'Give a reason (at least 3 characters).').max(1000);
export const userCreateSchema = z.object({
  username: z
    .string()
    .trim()
    .min(3)
    .max(64)
    .regex(/^[a-z0-9._-]+$/, 'Use lower-case letters, digits, dot, dash or underscore.'),
  fullName: z.string().trim().min(2).max(120),
  email: z.email().max(200),
  roles: z.array(z.enum(ROLES)).min(1, 'Give the account at least one role.'),
  temporaryPassword: z.string().min(12, 'The password must have at least 12 characters.').max(200),
});
export const userUpdateSchema = z.object({
  fullName: z.string().trim().min(2).max(120).optional(),
  email: z.email().max(200).optional(),
  roles: z.array(z.enum(ROLES)).min(1).optional(),
  active: z.boolean().optional(),
  reason,
});

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
        .map((u) => ({ id: u.id, fullName: u.full_name, username: u.username })),
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
      body: z.object({ signature: signatureInput }),
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
      body: z.object({ reason }),
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
      body: z.object({ reason }),
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
      body: z.object({ temporaryPassword: z.string().min(12).max(200), reason }),
    },
    ({ params, body, actor, ip }) =>
      service.resetPassword(getDb(), actor, params.id, body.temporaryPassword, body.reason, ip),
  );
  return r;
}
