/** Request-level security: session loading, Origin check for state-changing requests. */
import type { RequestHandler } from 'express';
import { getDb, parseJson } from './db';
import { SESSION_COOKIE, validateSession } from './sessions';
import { grantStanding } from './grant-seal';
import type { AuthUser } from './http';
import type { AppConfig } from './config';
import type { Role } from './contract';

export function sessionMiddleware(config: AppConfig): RequestHandler {
  return async (req, res, next) => {
    try {
      const token = (req.cookies as Record<string, string> | undefined)?.[SESSION_COOKIE];
      if (!token) return next();
      const db = getDb();
      const s = await validateSession(db, token, config.sessionIdleMinutes);
      if (!s) {
        res.clearCookie(SESSION_COOKIE, { path: '/' });
        return next();
      }
      const u = await db('app_user').where({ id: s.user_id }).first();
      if (!u || !u.active) return next();
      // Roles only from a grant Drumline wrote: sealed and linked to the one before, and the same
      // roles as the account row (server/lib/grant-seal.ts); otherwise the account acts with no role
      // and the integrity sweep raises the alert.
      const standing = await grantStanding(db, u.id);
      const roles = standing.ok && standing.roles === u.roles ? parseJson<Role[]>(u.roles, []) : [];
      const user: AuthUser = {
        id: u.id,
        username: u.username,
        fullName: u.full_name,
        email: u.email,
        roles,
        mustChangePassword: !!u.must_change_password,
        sessionId: s.id,
        signedOnce: !!s.signed_once,
      };
      res.locals.user = user;
      next();
    } catch (e) {
      next(e);
    }
  };
}

/**
 * Refuses state-changing requests whose Origin (or, lacking it, Referer) names another site.
 * Requests without either header come from non-browser clients (LIMS, scripts), which cannot
 * carry a victim's cookie, and are allowed.
 */
export function originCheck(config: AppConfig): RequestHandler {
  return (req, res, next) => {
    if (req.method === 'GET' || req.method === 'HEAD' || req.method === 'OPTIONS') return next();
    const origin = req.get('origin') ?? (req.get('referer') ? safeOrigin(req.get('referer')!) : undefined);
    if (!origin) return next();
    const host = req.get('host');
    const allowed = new Set([
      ...config.allowedOrigins,
      `http://${host}`,
      `https://${host}`,
      new URL(config.publicUrl).origin,
    ]);
    if (allowed.has(origin)) return next();
    res
      .status(403)
      .json({ error: { code: 'FOREIGN_ORIGIN', message: 'This request came from another site and was refused.' } });
  };
}

function safeOrigin(u: string): string | undefined {
  try {
    return new URL(u).origin;
  } catch {
    return 'invalid';
  }
}
