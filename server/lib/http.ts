/**
 * One way to declare a route: method, path, who may call it, zod schemas for body, query and
 * params. The same declaration validates the request, enforces the role on the server and
 * feeds the OpenAPI document (server/lib/openapi.ts), so the three never drift apart.
 */
import type { NextFunction, Request, RequestHandler, Response, Router } from 'express';
import { z } from 'zod';
import { extendZodWithOpenApi } from '@asteasolutions/zod-to-openapi';
import type { Role } from './contract';
import { AppError, forbidden, unauthorized } from './errors';
import type { Actor } from './audit';
import { guardedUpload } from './upload';

extendZodWithOpenApi(z);

export interface AuthUser {
  id: number;
  username: string;
  fullName: string;
  email: string;
  roles: Role[];
  mustChangePassword: boolean;
  sessionId: string;
  signedOnce: boolean;
}

/** A machine account (ERP, LIMS) calling with its API token (server/modules/integration/tokens.ts). */
export interface MachineUser {
  id: number;
  name: string;
  scopes: string[];
}

/**
 * Who may call a route: anyone, any signed-in person, the named roles, or a machine account whose
 * token holds the scope (a person's session never reaches a machine route).
 */
export type Access = 'public' | 'authenticated' | { roles: readonly Role[] } | { machine: string };
export type Method = 'get' | 'post' | 'put' | 'patch' | 'delete';

export interface RouteDef<
  B extends z.ZodType = z.ZodType,
  Q extends z.ZodType = z.ZodType,
  P extends z.ZodType = z.ZodType,
> {
  method: Method;
  path: string; // Express style, with the /api prefix: '/api/users/:id'
  summary: string;
  tag: string;
  access: Access;
  body?: B;
  query?: Q;
  params?: P;
  /** multipart upload middleware (multer) run before validation; documents a multipart body. */
  upload?: RequestHandler;
  uploadFields?: Record<string, string>;
  /** the response is not JSON (file download, stream); documents the media type. */
  produces?: string;
  status?: number;
  /** still callable while the account must change its password. */
  allowDuringPasswordChange?: boolean;
  description?: string;
  /**
   * A second way in besides a session with one of `access.roles`, checked first: true lets the
   * request through without a session (the metrics scraper's bearer token, server/lib/metrics.ts).
   */
  machineAccess?: (req: Request) => boolean;
}

export interface Ctx<B, Q, P> {
  req: Request;
  res: Response;
  user: AuthUser;
  actor: Actor;
  body: B;
  query: Q;
  params: P;
  ip: string | null;
  /** Set on machine routes: the calling machine account. */
  machine?: MachineUser;
}

export const routeRegistry: RouteDef[] = [];

export function isWrite(m: Method): boolean {
  return m !== 'get';
}

export function defineRoute<B extends z.ZodType, Q extends z.ZodType, P extends z.ZodType>(
  router: Router,
  def: RouteDef<B, Q, P>,
  handler: (ctx: Ctx<z.infer<B>, z.infer<Q>, z.infer<P>>) => Promise<unknown> | unknown,
): void {
  routeRegistry.push(def as unknown as RouteDef);
  const check: RequestHandler = (req, _res, next) => {
    // The declared route names the request in logs and metrics (server/lib/log.ts routeOf).
    _res.locals.route = def.path;
    const user = _res.locals.user as AuthUser | undefined;
    if (def.access === 'public') return next();
    if (def.machineAccess?.(req)) return next();
    if (typeof def.access === 'object' && 'machine' in def.access) {
      const machine = _res.locals.machine as MachineUser | undefined;
      if (!machine)
        return next(
          user
            ? forbidden('This route is for machine accounts (ERP, LIMS) with an API token, not for a signed-in person.')
            : new AppError(401, 'UNAUTHENTICATED', 'Send the machine token as "Authorization: Bearer dl_...".'),
        );
      if (!machine.scopes.includes(def.access.machine))
        return next(forbidden(`This machine token does not hold the scope ${def.access.machine}.`));
      return next();
    }
    if (!user) return next(unauthorized());
    if (user.mustChangePassword && !def.allowDuringPasswordChange)
      return next(new AppError(403, 'PASSWORD_CHANGE_REQUIRED', 'Change your password before you continue.'));
    if (
      def.access !== 'authenticated' &&
      'roles' in def.access &&
      !def.access.roles.some((r) => user.roles.includes(r))
    )
      return next(forbidden(`This needs the role ${def.access.roles.join(' or ')}.`));
    next();
  };
  const run = async (req: Request, res: Response, next: NextFunction) => {
    try {
      const body = def.body ? def.body.parse(req.body ?? {}) : undefined;
      const query = def.query ? def.query.parse(req.query ?? {}) : undefined;
      const params = def.params ? def.params.parse(req.params ?? {}) : undefined;
      const user = res.locals.user as AuthUser;
      const ctx = {
        req,
        res,
        user,
        actor: user ? { id: user.id, name: user.fullName } : { id: null, name: 'anonymous' },
        machine: res.locals.machine as MachineUser | undefined,
        body,
        query,
        params,
        ip: req.ip ?? null,
      } as Ctx<z.infer<B>, z.infer<Q>, z.infer<P>>;
      const out = await handler(ctx);
      if (res.headersSent) return;
      if (out === undefined) res.status(def.status ?? 204).end();
      else res.status(def.status ?? 200).json(out);
    } catch (e) {
      next(e);
    }
  };
  const chain: RequestHandler[] = [check];
  if (def.upload) chain.push(guardedUpload(def.upload));
  router[def.method](def.path, ...chain, run);
}

/** Shared parameter schemas. */
export const idParams = z.object({ id: z.coerce.number().int().positive() });
