/**
 * Screenshots of the main pages for README's "Try it" walkthrough, taken in Debian's Chromium.
 *   npm run build && npx tsx e2e/screenshots.ts
 * Self-contained: recreates the database `drumline_screenshots` (DRUMLINE_SCREENSHOT_DB), seeds
 * the demo site into it, serves the built client and the API on a free loopback port, signs in
 * as each demo person and writes docs/screenshots/*.png (1280 x 800, kept small).
 * Not a test: Playwright's test runner only picks up *.spec.ts.
 */
import { existsSync, mkdirSync } from 'node:fs';
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
}

async function lotId(page: Page, supplierLot: string): Promise<number> {
  const lots = (await (await page.request.get('/api/lots')).json()) as { id: number; supplierLot: string }[] | { items: { id: number; supplierLot: string }[] };
  const list = Array.isArray(lots) ? lots : lots.items;
  const lot = list.find((l) => l.supplierLot === supplierLot);
  if (!lot) throw new Error(`no demo lot with supplier lot ${supplierLot}`);
  return lot.id;
}

async function idOf(table: string, where: Record<string, unknown>): Promise<number> {
  const row = await getDb()(table).where(where).first();
  if (!row) throw new Error(`no ${table} row ${JSON.stringify(where)}`);
  return Number(row.id);
}

async function lastTestOf(supplierLot: string): Promise<number> {
  const lot = await getDb()('lot').where({ supplier_lot: supplierLot }).first();
  const t = await getDb()('identity_test').where({ lot_id: lot.id }).orderBy('attempt', 'desc').first();
  return Number(t.id);
}

const SHOTS: Shot[] = [
  { file: '01-sign-in.png', user: '', path: '/sign-in', waitFor: 'Sign in' },
  { file: '02-operator-work-queue.png', user: 'olga', path: '/', waitFor: /Work queue of Olga Brandt/ },
  { file: '03-operator-lot-partly-tested.png', user: 'olga', path: async (p) => `/lots/${await lotId(p, 'QX-MS-3301')}`, waitFor: 'QX-MS-3301' },
  { file: '04-instruments.png', user: 'olga', path: '/instruments', waitFor: 'FTIR 3 - dispensary' },
  { file: '05-verifier-review.png', user: 'victor', path: async () => `/tests/${await lastTestOf('AP-K30-5512')}/review`, waitFor: /Povidone/ },
  { file: '06-qa-investigation.png', user: 'quinn', path: async () => `/investigations/${await idOf('investigation', { status: 'open' })}`, waitFor: /Maize starch/ },
  { file: '07-qa-library.png', user: 'quinn', path: '/library', waitFor: 'Reference library' },
  { file: '08-qa-material-look-alike.png', user: 'quinn', path: async () => `/library/materials/${await idOf('material', { code: 'CIT-AN' })}`, waitFor: /CIT-AN/ },
  { file: '09-qa-draft-reference.png', user: 'quinn', path: async () => `/library/references/${await idOf('reference_spectrum', { status: 'draft' })}`, waitFor: /REF-STA-MZ-0004/ },
  { file: '10-certificate.png', user: 'aurelia', path: async () => `/certificates/${await idOf('certificate', { number: (await getDb()('certificate').orderBy('id').first()).number })}`, waitFor: /IC-/ },
  { file: '11-auditor-audit-trail.png', user: 'aurelia', path: '/audit', waitFor: /Audit trail/ },
  { file: '12-admin-accounts.png', user: 'adam', path: '/admin/users', waitFor: 'Irene Castell' },
];

async function signIn(page: Page, username: string) {
  await page.goto('/sign-in');
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await page.getByRole('heading', { name: /^Work queue of/ }).waitFor();
}

async function main(): Promise<void> {
  if (!existsSync(path.join(repoRoot, 'dist', 'index.html'))) throw new Error('build the client first: npm run build');
  console.log(`[screenshots] seeding the demo into ${database}`);
  await recreateDatabase(database);
  await migrateDatabase(database);
  await seedDemo(database);
  const { app } = createApp({ database, serveClient: true, config: { signInRateLimit: 10_000 } });
  const server = await new Promise<Server>((resolve) => {
    const s = app.listen(0, '127.0.0.1', () => resolve(s));
  });
  const base = `http://127.0.0.1:${(server.address() as AddressInfo).port}`;
  mkdirSync(outDir, { recursive: true });
  const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', args: ['--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking'] });
  try {
    let current = '';
    let context = await browser.newContext({ baseURL: base, viewport: { width: 1280, height: 800 }, deviceScaleFactor: 1 });
    let page = await context.newPage();
    for (const shot of SHOTS) {
      if (shot.user !== current) {
        await context.close();
        context = await browser.newContext({ baseURL: base, viewport: { width: 1280, height: 800 }, deviceScaleFactor: 1 });
        page = await context.newPage();
        if (shot.user) await signIn(page, shot.user);
        current = shot.user;
      }
      const target = typeof shot.path === 'string' ? shot.path : await shot.path(page);
      await page.goto(target);
      await page.getByText(shot.waitFor).first().waitFor({ timeout: 20_000 });
      await page.waitForLoadState('networkidle');
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
