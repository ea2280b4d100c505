/**
 * Starts Drumline: one Express server for the API and the built client (HOST, default 127.0.0.1).
 *
 * Graceful shutdown (SIGTERM or SIGINT; docs/deployment.md): the readiness probe turns 503 at
 * once, the listener stops taking connections, idle keep-alive connections are closed, and the
 * requests in flight run to their end (at most SHUTDOWN_GRACE_MS, default 10 s); then the
 * background jobs hand their leases back, the compute pool and the database pool close, and the
 * process exits 0. A second signal, or the grace time running out, exits at once with 1.
 */
import { createApp } from './app';
import { closeDb } from './lib/db';
import { stopAllJobs } from './lib/lease';
import { stopIntakeJob } from './modules/intake/watcher';
import { startDraining } from './lib/lifecycle';
import { childLog, safeError } from './lib/log';
import { closeComputePool } from './workers/pool';

const log = childLog('server');
const { app, config } = createApp({ serveClient: true });
const host = process.env.HOST ?? '127.0.0.1';
const server = app.listen(config.port, host, () => {
  const addr = server.address();
  const port = typeof addr === 'object' && addr ? addr.port : config.port;
  log.info({ host, port }, `Drumline is running at http://${host}:${port}`);
  // A parent process (tests, benchmarks) that asked for port 0 reads the port from this line.
  if (process.env.DRUMLINE_ANNOUNCE_PORT) process.stdout.write(`DRUMLINE_LISTENING ${port}\n`);
});
server.keepAliveTimeout = 65_000; // above the usual proxy idle timeouts (nginx 60 s): the proxy closes first
const startHooks = (app.locals.startHooks as (() => Promise<void>)[] | undefined) ?? [];
for (const h of startHooks) h().catch((e) => log.error({ err: safeError(e) }, 'start hook failed'));

let stopping = false;
function shutdown(signal: string) {
  if (stopping) {
    log.warn({ signal }, 'second stop signal: exiting now');
    process.exit(1);
  }
  stopping = true;
  startDraining();
  log.info({ signal, graceMs: config.shutdownGraceMs }, 'stopping: finishing requests in flight');
  const force = setTimeout(() => {
    log.error('requests still running after the grace time: exiting');
    process.exit(1);
  }, config.shutdownGraceMs);
  force.unref();
  server.close(() => {
    Promise.all([stopIntakeJob(), stopAllJobs(), closeComputePool()])
      .catch((e) => log.error({ err: safeError(e) }, 'stopping jobs failed'))
      .finally(() =>
        closeDb().finally(() => {
          log.info('stopped');
          process.exit(0);
        }),
      );
  });
  // A keep-alive connection whose last request ends during the grace time becomes idle then:
  // close idle connections until the server is down.
  server.closeIdleConnections();
  setInterval(() => server.closeIdleConnections(), 100).unref();
}
process.on('SIGINT', () => shutdown('SIGINT'));
process.on('SIGTERM', () => shutdown('SIGTERM'));
