/** Starts Drumline: one Express server for the API and the built client, on 127.0.0.1. */
import { createApp } from './app';
import { closeDb } from './lib/db';
import { stopAllJobs } from './lib/lease';
import { closeComputePool } from './workers/pool';

const { app, config } = createApp({ serveClient: true });
const host = process.env.HOST ?? '127.0.0.1';
const server = app.listen(config.port, host, () => {
  console.log(`\nDrumline is running at http://${host}:${config.port}\n`);
});
const startHooks = (app.locals.startHooks as (() => Promise<void>)[] | undefined) ?? [];
for (const h of startHooks) h().catch((e) => console.error('[start]', e));

function shutdown() {
  server.close(() => {
    Promise.all([stopAllJobs(), closeComputePool()])
      .catch(() => undefined)
      .finally(() => closeDb().finally(() => process.exit(0)));
  });
  setTimeout(() => process.exit(0), 3000).unref();
}
process.on('SIGINT', shutdown);
process.on('SIGTERM', shutdown);
