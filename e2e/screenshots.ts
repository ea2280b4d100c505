/**
 * Screenshots of the main pages for README's "Try it" walkthrough, taken in Debian's Chromium.
 *   npx tsx e2e/screenshots.ts
 * Self-contained: builds the client into dist-e2e/screenshots, recreates the database
 * `drumline_screenshots` (DRUMLINE_SCREENSHOT_DB), seeds the demo site into it, serves client and
 * API on a free loopback port, signs in as each demo person and writes docs/screenshots/*.png
 * (1280 x 800, kept small). Needs the private MariaDB running (npm run db:start).
 * Not a test: Playwright's test runner only picks up *.spec.ts.
 */
import { execFileSync } from 'node:child_process';
import { mkdirSync, rmSync } from 'node:fs';
import type { Server } from 'node:http';
import type { AddressInfo } from 'node:net';
import path from 'node:path';
import { chromium, type Page } from '@playwright/test';
import { repoRoot } from '../db/config';
import { migrateDatabase, recreateDatabase } from '../db/migrate';
import { seedDemo } from '../db/seed';
import { DEMO_PASSWORD } from '../db/seeds/accounts';
import { createApp } from '../server/app';
import { closeDb, getDb } from '../server/lib/db';

const database = process.env.DRUMLINE_SCREENSHOT_DB ?? 'drumline_screenshots';
process.env.SITE_NAME ??= 'Lindenhall Pharma, Werk Süd (demo)';
const outDir = path.join(repoRoot, 'docs', 'screenshots');

interface Shot {
  file: string;
  user: string;
  /** Path to open, or a function finding it (ids differ per seed). */
  path: string | ((page: Page) => Promise<string>);
  /** Text that must be visible before the picture is taken. */
  waitFor: string | RegExp;
  /** Clicks or scrolling before the picture. */
  prepare?: (page: Page) => Promise<void>;
}

async function idOf(table: string, where: Record<string, unknown>): Promise<number> {
  const row = await getDb()(table).where(where).first();
  if (!row) throw new Error(`no ${table} row ${JSON.stringify(where)}`);
  return Number(row.id);
}

async function lastTestOf(supplierLot: string): Promise<number> {
  const lot = (await getDb()('lot').where({ supplier_lot: supplierLot }).first())!;
  const t = (await getDb()('identity_test').where({ lot_id: lot.id }).orderBy('attempt', 'desc').first())!;
  return t.id;
}

async function lotOf(supplierLot: string): Promise<number> {
  return idOf('lot', { supplier_lot: supplierLot });
}

const SHOTS: Shot[] = [
  { file: '01-sign-in.png', user: '', path: '/sign-in', waitFor: 'Sign in' },
  { file: '02-operator-work-queue.png', user: 'olga', path: '/', waitFor: /Work queue of Olga Brandt/ },
  {
    file: '03-operator-bench.png',
    user: 'olga',
    path: async () => `/lots/${await lotOf('QX-MS-3301')}`,
    waitFor: 'QX-MS-3301',
  },
  { file: '04-instruments.png', user: 'olga', path: '/instruments', waitFor: 'FTIR 3 - dispensary' },
  {
    file: '05-verifier-review.png',
    user: 'victor',
    path: async () => `/tests/${await lastTestOf('AP-K30-5512')}/review`,
    waitFor: /Povidone/,
  },
  {
    file: '06-mix-up-result.png',
    user: 'victor',
    path: async () => `/tests/${await lastTestOf('QX-MC-7720')}/review`,
    waitFor: /Microcrystalline cellulose/,
    prepare: async (page) => {
      await page
        .getByText(/Closest approved materials: Maize starch/)
        .first()
        .scrollIntoViewIfNeeded();
      await page.mouse.wheel(0, 250);
    },
  },
  {
    file: '07-qa-investigation.png',
    user: 'quinn',
    path: async () => `/investigations/${await idOf('investigation', { status: 'open' })}`,
    waitFor: /Maize starch/,
  },
  { file: '08-qa-library.png', user: 'quinn', path: '/library', waitFor: 'CIT-MH' },
  {
    file: '09-qa-look-alike-method.png',
    user: 'quinn',
    path: async () => `/library/materials/${await idOf('material', { code: 'CIT-AN' })}`,
    waitFor: /CIT-AN/,
  },
  {
    file: '10-qa-draft-reference.png',
    user: 'quinn',
    path: async () => `/library/references/${await idOf('reference_spectrum', { status: 'draft' })}`,
    waitFor: /REF-STA-MZ-0004/,
  },
  { file: '11-auditor-work-queue.png', user: 'aurelia', path: '/', waitFor: /Work queue of Aurelia Santos/ },
  {
    file: '12-certificate.png',
    user: 'aurelia',
    path: async () => `/certificates/${(await getDb()('certificate').orderBy('id').first())!.id}`,
    waitFor: /IC-/,
  },
  { file: '13-auditor-audit-trail.png', user: 'aurelia', path: '/audit', waitFor: /Audit trail/ },
  { file: '14-admin-accounts.png', user: 'adam', path: '/admin/users', waitFor: 'Tomas Berg' },
];

async function signIn(page: Page, username: string) {
  await page.goto('/sign-in');
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByRole('heading', { name: /^Work queue of/ }).waitFor();
}

async function main(): Promise<void> {
  const clientDir = 'dist-e2e/screenshots';
  console.log(`[screenshots] building the client into ${clientDir}`);
  execFileSync('npx', ['vite', 'build', '--logLevel', 'warn', '--outDir', clientDir, '--emptyOutDir'], {
    cwd: repoRoot,
    stdio: 'inherit',
  });
  process.env.DRUMLINE_CLIENT_DIR = clientDir;
  console.log(`[screenshots] seeding the demo into ${database}`);
  await recreateDatabase(database);
  await migrateDatabase(database);
  await seedDemo(database);
  const { app } = createApp({ database, serveClient: true, config: { signInRateLimit: 10_000 } });
  const server = await new Promise<Server>((resolve) => {
    const s = app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  rmSync(outDir, { recursive: true, force: true });
  mkdirSync(outDir, { recursive: true });
  const browser = await chromium.launch({
    executablePath: '/usr/bin/chromium',
    args: ['--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking'],
  });
  try {
    let current = '';
    let context = await browser.newContext({
      baseURL: base,
      viewport: { width: 1280, height: 800 },
      deviceScaleFactor: 1,
    });
    let page = await context.newPage();
    for (const shot of SHOTS) {
      if (shot.user !== current) {
        await context.close();
        context = await browser.newContext({
          baseURL: base,
          viewport: { width: 1280, height: 800 },
          deviceScaleFactor: 1,
        });
        page = await context.newPage();
        if (shot.user) await signIn(page, shot.user);
        current = shot.user;
      }
      const target = typeof shot.path === 'string' ? shot.path : await shot.path(page);
      await page.goto(target);
      await page.getByText(shot.waitFor).first().waitFor({ timeout: 20_000 });
      await page.waitForLoadState('networkidle');
      if (shot.prepare) await shot.prepare(page);
      await page.waitForTimeout(300);
      await page.screenshot({ path: path.join(outDir, shot.file) });
      console.log(`[screenshots] ${shot.file} (${target})`);
    }
    await context.close();
  } finally {
    await browser.close();
    await new Promise<void>((resolve) => server.close(() => resolve()));
  }
}

main()
  .catch((e) => {
    console.error('[screenshots] failed:', e instanceof Error ? e.message : e);
    process.exitCode = 1;
  })
  .finally(() => closeDb());
