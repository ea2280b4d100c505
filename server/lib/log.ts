/**
 * Structured JSON logs (pino, one line per event on stdout) with a request id per request
 * (pino-http). What a log line may hold is decided here and nowhere else (docs/operations.md,
 * "Logs"): the method, the declared route and the path without its query, the status, the time
 * taken, the request id, the client address; never a header (cookies, tokens), a body (passwords,
 * file bytes) or an SQL statement with its data (`safeError`). GMP events are audit events in the
 * database (server/lib/audit.ts); a log line is for operating the system, never the record.
 *
 * LOG_LEVEL: fatal, error, warn, info (default), debug, silent; under vitest the default is error.
 */
import crypto from 'node:crypto';
import type { IncomingMessage, ServerResponse } from 'node:http';
import type { Request, RequestHandler } from 'express';
import pino, { type Logger } from 'pino';
import { pinoHttp } from 'pino-http';

const level = process.env.LOG_LEVEL ?? (process.env.VITEST ? 'error' : 'info');

/** The process's logger; modules take a child with their own `component`. */
export const log: Logger = pino({
  level,
  base: { pid: process.pid },
  timestamp: pino.stdTimeFunctions.isoTime,
  formatters: { level: (label) => ({ level: label }) },
  // A last line of defence: these paths never reach a log line even if a caller passes them.
  redact: {
    paths: [
      'password',
      '*.password',
      'token',
      '*.token',
      'signature.password',
      'headers.cookie',
      'headers.authorization',
      '*.headers.cookie',
      '*.headers.authorization',
      'sql',
      '*.sql',
      'bindings',
      '*.bindings',
    ],
    censor: '[removed]',
  },
});

export function childLog(component: string): Logger {
  return log.child({ component });
}

/**
 * An error as it may be logged: name, code and numbers, and a message only when it cannot carry
 * data. A database error's message holds the SQL statement with its values (knex prefixes it) or
 * the value that clashed (MariaDB's duplicate-key text), so it is replaced by its code.
 */
export function safeError(err: unknown): Record<string, unknown> {
  const e = (err ?? {}) as {
    name?: string;
    message?: string;
    code?: string;
    errno?: number;
    sqlState?: string;
    sql?: string;
    stack?: string;
  };
  const isDb = e.sql !== undefined || e.sqlState !== undefined || typeof e.errno === 'number';
  const out: Record<string, unknown> = { name: e.name ?? typeof err };
  if (e.code) out.code = e.code;
  if (typeof e.errno === 'number') out.errno = e.errno;
  if (e.sqlState) out.sqlState = e.sqlState;
  if (isDb) {
    out.message = `database error${e.code ? ` ${e.code}` : ''}`;
  } else {
    out.message = String(e.message ?? err).slice(0, 500);
    // Stack frames (file and line) without the first line, which repeats the message.
    if (e.stack) out.stack = e.stack.split('\n').slice(1, 8).join('\n');
  }
  return out;
}

/** An incoming X-Request-Id is kept when it looks like one (a proxy's id); otherwise a new UUID. */
function requestId(req: IncomingMessage, res: ServerResponse): string {
  const given = req.headers['x-request-id'];
  const id = typeof given === 'string' && /^[A-Za-z0-9._:-]{8,100}$/.test(given) ? given : crypto.randomUUID();
  res.setHeader('X-Request-Id', id);
  return id;
}

/** The declared route of a request ('/api/lots/:id'), or what kind of request it was. */
export function routeOf(req: Request | IncomingMessage): string {
  const r = req as Request;
  const declared = (r.res?.locals as { route?: string } | undefined)?.route;
  if (declared) return declared;
  const url = (r.originalUrl ?? req.url ?? '').split('?')[0];
  return url.startsWith('/api/') ? 'unmatched' : 'client';
}

/** The request log: one line per finished request, at warn for 4xx-5xx (error for 5xx). */
export function httpLogger(): RequestHandler {
  return pinoHttp({
    logger: log.child({ component: 'http' }),
    genReqId: requestId,
    wrapSerializers: false,
    serializers: {
      req: (req: IncomingMessage & { id?: string; originalUrl?: string; ip?: string }) => ({
        id: req.id,
        method: req.method,
        path: (req.originalUrl ?? req.url ?? '').split('?')[0].slice(0, 300),
        ip: req.ip,
      }),
      res: (res: ServerResponse) => ({ status: res.statusCode }),
      err: (e: unknown) => safeError(e),
    },
    customLogLevel: (_req, res, err) =>
      err || res.statusCode >= 500 ? 'error' : res.statusCode >= 400 ? 'warn' : 'info',
    // The req binding is made when the request starts; the route is known only when it ends.
    customSuccessObject: (req, _res, val: object) => ({ ...val, route: routeOf(req) }),
    customErrorObject: (req, _res, _err, val: object) => ({ ...val, route: routeOf(req) }),
    customSuccessMessage: (req, res) => `${req.method} ${routeOf(req)} ${res.statusCode}`,
    customErrorMessage: (req, res) => `${req.method} ${routeOf(req)} ${res.statusCode}`,
    // The health probes run every few seconds: logging them would drown everything else.
    autoLogging: { ignore: (req) => /^\/api\/(live|ready|health|metrics)(\?|$)/.test(req.url ?? '') },
  }) as unknown as RequestHandler;
}
