/** HTTP edge of sign-in, sign-out, the current user and password change. */
import { Router } from 'express';
import rateLimit from 'express-rate-limit';
import type { AppConfig } from '../../lib/config';
import { getDb } from '../../lib/db';
import { DbRateStore } from '../../lib/rate-store';
import { defineRoute } from '../../lib/http';
import { SESSION_COOKIE } from '../../lib/sessions';
import { changePasswordSchema, type Me, signInSchema, type SignInResult } from './contract';
import * as service from './service';

export function authRoutes(cfg: AppConfig): Router {
  const r = Router();
  // Per client address (req.ip: X-Forwarded-For only from TRUSTED_PROXIES), counted in MariaDB so
  // that the limit holds across app servers.
  const limiter = rateLimit({
    windowMs: cfg.signInRateWindowMinutes * 60_000,
    limit: cfg.signInRateLimit,
    standardHeaders: 'draft-7',
    legacyHeaders: false,
    store: new DbRateStore(getDb),
    // A forwarded-for header from a client that is not a trusted proxy is ignored on purpose.
    validate: { xForwardedForHeader: false },
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
    async ({ body, res, ip }): Promise<SignInResult> => {
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
    ({ user }): Me => ({
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
      await service.changePassword(getDb(), cfg, user, body.currentPassword, body.newPassword, ip);
    },
  );
  return r;
}
