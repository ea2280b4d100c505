/**
 * Builds the Express application (tests import this; server/index.ts starts it).
 * Order: security headers -> body parsers -> Origin check -> session -> module routes ->
 * API 404 -> error shape -> built client with SPA fallback.
 */
import fs from 'node:fs';
import path from 'node:path';
import express, { type Express } from 'express';
import cookieParser from 'cookie-parser';
import helmet from 'helmet';
import { repoRoot } from '../db/config';
import { loadConfig, type AppConfig } from './lib/config';
import { getDb, initDb } from './lib/db';
import { errorHandler } from './lib/errors';
import { originCheck, sessionMiddleware } from './lib/auth';
import { setLockoutPolicy } from './lib/lockout';
import { authRoutes } from './modules/auth/routes';
import { userRoutes } from './modules/users/routes';
import { systemRoutes } from './modules/system/routes';
import { mailRoutes } from './modules/mail/routes';
import { libraryRoutes } from './modules/library/routes';
import { instrumentRoutes } from './modules/instruments/routes';
import { auditRoutes } from './modules/audit/routes';
import { certificateRoutes } from './modules/certificates/routes';
import { lotRoutes } from './modules/lots/routes';
import { lotRecordRoutes } from './modules/lot-record';
import { testingRoutes } from './modules/testing/routes';
import { workQueueRoutes } from './modules/work-queue';
import { investigationRoutes } from './modules/investigations/routes';
import { integrityRoutes } from './modules/integrity/routes';
import { archiveRoutes } from './modules/archive/routes';
import { supplierRoutes } from './modules/suppliers/routes';
import { dispositionRoutes } from './modules/disposition/routes';
import { samplingRoutes } from './modules/sampling/routes';
import { integrationRoutes } from './modules/integration/routes';
import { machineTokenMiddleware } from './modules/integration/tokens';
import { startWebhookJob } from './lib/webhook-outbox';
import { apiReferenceRoutes } from './modules/system/api-reference';
import { startIntegrityJob } from './modules/integrity/service';
import { useRecipes } from './modules/integrity';
import { RECIPES } from './signature-recipes';
import { trendingRoutes } from './modules/trending/routes';
import { auditReviewRoutes } from './modules/audit-review/routes';
import { startAuditReviewReminderJob } from './modules/audit-review/service';
import { startTrendJob } from './modules/trending/service';
import { startCertificateRetryJob } from './modules/certificates';
import { startAnchorJob } from './modules/audit/anchor';
import { intakeRoutes, startIntakeJob } from './modules/intake';
import { startFakeTsa } from './lib/signing';
import { initMail, startMailWorker } from './lib/mail';
import { httpLogger } from './lib/log';
import { metricsMiddleware, setMetricsDb } from './lib/metrics';

export interface CreateAppOptions {
  config?: Partial<AppConfig>;
  database?: string;
  serveClient?: boolean;
}

// The integrity checks rebuild every module's signed content from this table (docs/architecture.md,
// "Direction of imports"); handed over when the app is loaded, before any check can run.
useRecipes(RECIPES);

export function createApp(opts: CreateAppOptions = {}): { app: Express; config: AppConfig } {
  const config = loadConfig(opts.config);
  setMetricsDb(initDb(opts.database));
  const app = express();
  app.disable('x-powered-by');
  // X-Forwarded-For only from the configured proxies (none by default): req.ip is the real client.
  app.set('trust proxy', config.trustedProxies.length ? config.trustedProxies : false);
  setLockoutPolicy({ attempts: config.lockoutAttempts, minutes: config.lockoutMinutes });
  app.locals.config = config;
  app.use(httpLogger());
  app.use(metricsMiddleware());
  app.use(
    helmet({
      contentSecurityPolicy: {
        directives: {
          defaultSrc: ["'self'"],
          styleSrc: ["'self'", "'unsafe-inline'"],
          imgSrc: ["'self'", 'data:', 'blob:'],
          fontSrc: ["'self'"],
          connectSrc: ["'self'"],
          objectSrc: ["'none'"],
          frameAncestors: ["'none'"],
          upgradeInsecureRequests: null,
        },
      },
      strictTransportSecurity: config.publicUrl.startsWith('https:'),
    }),
  );
  app.use(express.json({ limit: '1mb' }));
  app.use(cookieParser());
  app.use('/api', originCheck(config));
  app.use('/api', sessionMiddleware(config));
  app.use('/api', machineTokenMiddleware());

  // Module routers: each declares its routes through server/lib/http.ts (validation, roles, OpenAPI).
  const routers = [
    systemRoutes(config),
    authRoutes(config),
    userRoutes(),
    mailRoutes(config),
    libraryRoutes(config),
    instrumentRoutes(config),
    auditRoutes(config),
    certificateRoutes(config),
    lotRoutes(config),
    lotRecordRoutes(config),
    testingRoutes(config),
    workQueueRoutes(config),
    intakeRoutes(config),
    investigationRoutes(),
    integrityRoutes(),
    supplierRoutes(),
    dispositionRoutes(config),
    integrationRoutes(config),
    samplingRoutes(config),
    trendingRoutes(),
    auditReviewRoutes(config),
    archiveRoutes(config),
  ];
  for (const r of routers) app.use(r);

  app.use(apiReferenceRoutes());

  app.use('/api', (req, res) => {
    res
      .status(404)
      .json({ error: { code: 'NOT_FOUND', message: `There is no API route ${req.method} ${req.originalUrl}.` } });
  });
  app.use(errorHandler);

  // DRUMLINE_CLIENT_DIR: another build folder (the browser tests build their own, beside a running dev build).
  const dist = process.env.DRUMLINE_CLIENT_DIR
    ? path.resolve(repoRoot, process.env.DRUMLINE_CLIENT_DIR)
    : path.join(repoRoot, 'dist');
  if (opts.serveClient && fs.existsSync(path.join(dist, 'index.html'))) {
    app.use(express.static(dist, { index: false, maxAge: '1h' }));
    app.get(/^(?!\/api\/).*/, (_req, res) => res.sendFile('index.html', { root: dist }));
  }
  app.use(errorHandler);
  // Run by server/index.ts after listen (tests call initMail/processOutbox themselves).
  app.locals.startHooks = [
    async () => {
      await initMail(config);
      startMailWorker(getDb());
      startIntegrityJob(getDb(), config.integritySweepHours);
      startWebhookJob(getDb());
      startTrendJob(getDb());
      startAuditReviewReminderJob(getDb(), config.auditReviewMonths);
      startCertificateRetryJob(getDb(), config);
      // the local fake time-stamping authority of development and tests (docs/certificates.md)
      if (!config.tsaUrl && config.devMode) await startFakeTsa();
      startAnchorJob(getDb(), config);
      startIntakeJob(getDb(), config);
    },
  ];
  return { app, config };
}
