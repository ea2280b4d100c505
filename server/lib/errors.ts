/** Application errors and the one error shape of the API: { error: { code, message, details } }. */
import type { ErrorRequestHandler } from 'express';
import { ZodError } from 'zod';
import { SpectrumError } from '../spectra';

export class AppError extends Error {
  constructor(
    public status: number,
    public code: string,
    message: string,
    public details?: unknown,
  ) {
    super(message);
  }
}

export const badRequest = (message: string, details?: unknown) => new AppError(400, 'BAD_REQUEST', message, details);
export const unauthorized = (message = 'Please sign in.') => new AppError(401, 'UNAUTHENTICATED', message);
export const forbidden = (message = 'Your role does not allow this action.') => new AppError(403, 'FORBIDDEN', message);
export const notFound = (what: string) => new AppError(404, 'NOT_FOUND', `${what} was not found.`);
export const conflict = (message: string, details?: unknown) => new AppError(409, 'CONFLICT', message, details);
export const unprocessable = (code: string, message: string, details?: unknown) =>
  new AppError(422, code, message, details);

/**
 * The one mapping of the engine's refusal of a spectrum (a SpectrumError) to the API's answer:
 * 422, the engine's code, the message "<file name>: <the engine's sentence> Nothing was stored."
 * and details { fileName, code, sentence, details }. Recognised by name as well, so an error from a
 * second copy of the engine module (tests, workers) maps the same. Anything else is returned as is,
 * for the caller to throw.
 */
export function spectrumRefusal(e: unknown, fileName: string | null = null): unknown {
  const se = e as { name?: string; code?: string; message?: string; details?: unknown } | null;
  if (!(e instanceof SpectrumError) && se?.name !== 'SpectrumError') return e;
  const code = se?.code ?? 'SPECTRUM_INVALID';
  const sentence = se?.message || 'The spectrum could not be read.';
  return unprocessable(code, `${fileName ? `${fileName}: ` : ''}${sentence} Nothing was stored.`, {
    fileName,
    code,
    sentence,
    details: se?.details ?? null,
  });
}

/**
 * Errors that mean "the database connection is gone or cannot be had", whatever the layer that
 * reports it: the socket (ECONNREFUSED, ECONNRESET, EPIPE, ETIMEDOUT, ...), mysql2's protocol layer
 * (PROTOCOL_CONNECTION_LOST, "connection is in closed state", enqueue after a fatal error), the
 * server (shutdown in progress, connection killed, too many connections, a Galera node not ready)
 * and knex's pool (timeout acquiring a connection). All answer 503 with one sentence; none is a bug
 * of the application, so none is logged with a stack trace.
 */
const DB_DOWN_CODES = new Set([
  'ECONNREFUSED',
  'ECONNRESET',
  'ECONNABORTED',
  'EPIPE',
  'ETIMEDOUT',
  'EHOSTUNREACH',
  'ENETUNREACH',
  'ENOTFOUND',
  'EAI_AGAIN',
  'PROTOCOL_CONNECTION_LOST',
  'PROTOCOL_SEQUENCE_TIMEOUT',
  'PROTOCOL_ENQUEUE_AFTER_FATAL_ERROR',
  'PROTOCOL_ENQUEUE_AFTER_QUIT',
  'PROTOCOL_ENQUEUE_HANDSHAKE_TWICE',
  'ER_CON_COUNT_ERROR',
  'ER_SERVER_SHUTDOWN',
  'ER_CONNECTION_KILLED',
  'ER_QUERY_INTERRUPTED',
  'ER_ABORTING_CONNECTION',
  'ER_NEW_ABORTING_CONNECTION',
]);
/** Server and client error numbers of the same conditions (MariaDB error reference; 2xxx are client codes). */
const DB_DOWN_ERRNOS = new Set([1040, 1047, 1053, 1152, 1184, 1317, 1927, 2002, 2003, 2006, 2013, 2055]);
const DB_DOWN_MESSAGES =
  /connect ECONNREFUSED|Timeout acquiring a connection|closed state|Connection lost|read ECONNRESET|write EPIPE|server has gone away|Lost connection to (MySQL|MariaDB) server|WSREP has not yet prepared node/i;

export function isDbDown(err: unknown, depth = 0): boolean {
  const e = err as { code?: string; errno?: number; name?: string; message?: string; fatal?: boolean; cause?: unknown };
  if (!e || typeof e !== 'object' || depth > 3) return false;
  if (e.code && DB_DOWN_CODES.has(e.code)) return true;
  if (typeof e.errno === 'number' && DB_DOWN_ERRNOS.has(e.errno)) return true;
  if (e.name === 'KnexTimeoutError') return true;
  // mysql2 marks every error after which the connection is unusable as fatal.
  if (e.fatal === true && (e.code?.startsWith('PROTOCOL_') || e.code?.startsWith('E'))) return true;
  if (DB_DOWN_MESSAGES.test(e.message ?? '')) return true;
  return e.cause !== undefined && isDbDown(e.cause, depth + 1);
}

export const DB_DOWN_MESSAGE =
  'The database is not reachable. Try again in a moment; if it persists, call the system administrator.';

function zodDetails(err: ZodError) {
  return err.issues.map((i) => ({ path: i.path.join('.'), message: i.message }));
}

/**
 * What the log may say about an unexpected error. A database error is logged as its code and the
 * server's own message with the stack below it: knex prefixes its messages with the SQL statement
 * and its bound values (a certificate's PDF, a raw file), and mysql2 keeps the statement in `sql`;
 * neither is ever written to the log (docs/certificates.md, "When issuing fails").
 */
export function loggableError(err: unknown): unknown {
  const e = err as { sqlMessage?: string; code?: string; errno?: number; stack?: string } | null;
  if (!e || typeof e !== 'object' || typeof e.sqlMessage !== 'string') return err;
  const head = `database error ${e.code ?? ''} (${e.errno ?? '?'}): ${e.sqlMessage}`;
  const frames = (e.stack ?? '').split('\n').filter((l) => /^\s+at /.test(l));
  return [head, ...frames].join('\n');
}

export const errorHandler: ErrorRequestHandler = (err, _req, res, _next) => {
  if (res.headersSent) return;
  const send = (status: number, code: string, message: string, details?: unknown) =>
    res.status(status).json({ error: { code, message, ...(details !== undefined ? { details } : {}) } });
  if (err instanceof AppError) return send(err.status, err.code, err.message, err.details);
  if (err instanceof ZodError) {
    const first = err.issues[0];
    return send(
      400,
      'VALIDATION',
      `Invalid input${first ? ` at "${first.path.join('.') || '(body)'}": ${first.message}` : ''}.`,
      zodDetails(err),
    );
  }
  const refused = spectrumRefusal(err);
  if (refused instanceof AppError) return send(refused.status, refused.code, refused.message, refused.details);
  const e = err as { name?: string; code?: string; type?: string; status?: number; message?: string; field?: string };
  if (e?.name === 'MulterError') {
    if (e.code === 'LIMIT_FILE_SIZE')
      return send(
        413,
        'FILE_TOO_LARGE',
        'The file is larger than the upload limit. Export only the spectrum and try again.',
      );
    return send(400, 'UPLOAD', `Upload refused: ${e.message}${e.field ? ` (field ${e.field})` : ''}.`);
  }
  if (e?.type === 'entity.parse.failed') return send(400, 'MALFORMED_JSON', 'The request body is not valid JSON.');
  if (e?.type === 'entity.too.large') return send(413, 'TOO_LARGE', 'The request body is too large.');
  if (isDbDown(err)) return send(503, 'DATABASE_DOWN', DB_DOWN_MESSAGE);
  if (e?.code === 'ER_DUP_ENTRY') return send(409, 'DUPLICATE', 'A record with this identifier already exists.');
  console.error('[error]', loggableError(err));
  return send(
    500,
    'INTERNAL',
    'Something went wrong on the server. The event was logged; please tell the system administrator.',
  );
};
