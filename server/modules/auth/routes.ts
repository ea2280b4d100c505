/** HTTP edge of sign-in, sign-out, the current user and password change. */
import { Router } from 'express';
import rateLimit from 'express-rate-limit';
import { z } from 'zod';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { defineRoute } from '../../lib/http';
import { SESSION_COOKIE } from '../../lib/sessions';
import * as service from './service';

export const signInSchema = z.object({
  username: z.string().trim().min(1, 'Enter your user name.').max(64),
  password: z.string().min(1, 'Enter your password.').max(200),
});
export const changePasswordSchema = z.object({
  currentPassword: z.string().min(1).max(200),
  newPassword: z.string().min(12, 'The new password must have at least 12 characters.').max(200),
});

export function authRoutes(cfg: AppConfig): Router {
  const r = Router();
  const limiter = rateLimit({
    windowMs: cfg.signInRateWindowMinutes * 60_000,
    limit: cfg.signInRateLimit,
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    handler: (_req, res) =>
      res.status(429).json({
        error: {
          code: 'TOO_MANY_ATTEMPTS',
          message: 'Too many sign-in attempts from this computer. Wait a few minutes and try again.',
        },
      }),
  });
  r.use('/api/auth/sign-in', limiter);
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/auth/sign-in',
      summary: 'Sign in; sets the session cookie',
      tag: 'auth',
      access: 'public',
      body: signInSchema,
    },
    async ({ body, res, ip }) => {
      const { token, user } = await service.signIn(getDb(), cfg, body.username, body.password, ip);
      res.cookie(SESSION_COOKIE, token, {
        httpOnly: true,
        sameSite: 'strict',
        secure: cfg.publicUrl.startsWith('https:'),
        path: '/',
        maxAge: cfg.sessionMaxHours * 3600_000,
      });
      return { user };
    },
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/auth/sign-out',
      summary: 'Sign out; ends the session',
      tag: 'auth',
      access: 'authenticated',
      allowDuringPasswordChange: true,
    },
    async ({ user, res, ip }) => {
      await service.signOut(getDb(), user, ip);
      res.clearCookie(SESSION_COOKIE, { path: '/' });
    },
  );
  defineRoute(
    r,
    {
      method: 'get',
      path: '/api/auth/me',
      summary: 'The signed-in user, roles and session settings',
      tag: 'auth',
      access: 'authenticated',
      allowDuringPasswordChange: true,
    },
    ({ user }) => ({
      user: {
        id: user.id,
        username: user.username,
        fullName: user.fullName,
        email: user.email,
        roles: user.roles,
        mustChangePassword: user.mustChangePassword,
        signedOnce: user.signedOnce,
      },
      site: {
        name: cfg.siteName,
        timeZone: cfg.siteTimeZone,
        idleMinutes: cfg.sessionIdleMinutes,
        devMode: cfg.devMode,
      },
    }),
  );
  defineRoute(
    r,
    {
      method: 'post',
      path: '/api/auth/password',
      summary: 'Change own password',
      tag: 'auth',
      access: 'authenticated',
      allowDuringPasswordChange: true,
      body: changePasswordSchema,
    },
    async ({ user, body, ip }) => {
      await service.changePassword(getDb(), user, body.currentPassword, body.newPassword, ip);
    },
  );
  return r;
}
