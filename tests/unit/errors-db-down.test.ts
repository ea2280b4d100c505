/**
 * Every way mysql2, MariaDB or knex's pool says "the database connection is gone" answers 503 in
 * the error shape with one sentence, without a stack trace in the log (issue 12 finding 7: about
 * half of the in-flight requests answered 500 when MariaDB died). The error shapes are those mysql2
 * 3.x gives (code, errno, fatal flag, message); the numbers are MariaDB's documented error codes
 * (server 1040 too many connections, 1053 server shutdown, 1927 connection killed; client 2006
 * server gone away, 2013 lost connection during query). tests/api/db-killed.test.ts kills a real
 * server under load.
 */
import { log as appLog } from '../../server/lib/log';
import { describe, expect, it, vi } from 'vitest';
import { errorHandler, isDbDown } from '../../server/lib/errors';

function mysqlError(message: string, props: Record<string, unknown>): Error {
  return Object.assign(new Error(message), props);
}

const LOST: [string, Error][] = [
  [
    'connection refused',
    mysqlError('connect ECONNREFUSED 127.0.0.1:3307', { code: 'ECONNREFUSED', errno: -111, fatal: true }),
  ],
  ['connection reset', mysqlError('read ECONNRESET', { code: 'ECONNRESET', errno: -104, fatal: true })],
  ['broken pipe', mysqlError('write EPIPE', { code: 'EPIPE', errno: -32, fatal: true })],
  ['connect timeout', mysqlError('connect ETIMEDOUT', { code: 'ETIMEDOUT', fatal: true })],
  [
    'connection lost',
    mysqlError('Connection lost: The server closed the connection.', { code: 'PROTOCOL_CONNECTION_LOST', fatal: true }),
  ],
  ['closed state', mysqlError("Can't add new command when connection is in closed state", { fatal: true })],
  [
    'enqueue after fatal error',
    mysqlError('Cannot enqueue Query after fatal error.', { code: 'PROTOCOL_ENQUEUE_AFTER_FATAL_ERROR', fatal: false }),
  ],
  ['server shutdown', mysqlError('Server shutdown in progress', { code: 'ER_SERVER_SHUTDOWN', errno: 1053 })],
  ['connection killed', mysqlError('Connection was killed', { code: 'ER_CONNECTION_KILLED', errno: 1927 })],
  ['too many connections', mysqlError('Too many connections', { code: 'ER_CON_COUNT_ERROR', errno: 1040 })],
  ['server gone away', mysqlError('MySQL server has gone away', { errno: 2006 })],
  ['lost during query', mysqlError('Lost connection to MySQL server during query', { errno: 2013 })],
  [
    'pool timeout',
    Object.assign(new Error('Knex: Timeout acquiring a connection. The pool is probably full.'), {
      name: 'KnexTimeoutError',
    }),
  ],
  ['wrapped cause', new Error('transaction failed', { cause: mysqlError('read ECONNRESET', { code: 'ECONNRESET' }) })],
];

function run(err: unknown) {
  const res = {
    headersSent: false,
    statusCode: 0,
    body: undefined as unknown,
    status(s: number) {
      this.statusCode = s;
      return this;
    },
    json(b: unknown) {
      this.body = b;
      return this;
    },
  };
  errorHandler(err, {} as never, res as never, () => undefined);
  return res;
}

describe('lost database connections answer 503', () => {
  it.each(LOST)('%s', (_what, err) => {
    const log = vi.spyOn(appLog, 'error').mockImplementation(() => undefined);
    expect(isDbDown(err)).toBe(true);
    const res = run(err);
    expect(res.statusCode).toBe(503);
    expect(res.body).toEqual({
      error: {
        code: 'DATABASE_DOWN',
        message: 'The database is not reachable. Try again in a moment; if it persists, call the system administrator.',
      },
    });
    expect(log).not.toHaveBeenCalled();
    log.mockRestore();
  });

  it('other database errors are not taken for a lost connection', () => {
    const dup = mysqlError("Duplicate entry 'x' for key 'PRIMARY'", { code: 'ER_DUP_ENTRY', errno: 1062 });
    const trigger = mysqlError('audit_event is append-only', { code: 'ER_SIGNAL_EXCEPTION', errno: 1644 });
    const syntax = mysqlError('You have an error in your SQL syntax', { code: 'ER_PARSE_ERROR', errno: 1064 });
    expect(isDbDown(dup)).toBe(false);
    expect(isDbDown(trigger)).toBe(false);
    expect(isDbDown(syntax)).toBe(false);
    expect(run(dup).statusCode).toBe(409);
    const log = vi.spyOn(appLog, 'error').mockImplementation(() => undefined);
    expect(run(syntax).statusCode).toBe(500);
    log.mockRestore();
  });
});
