/**
 * The main pages of Drumline, each opened by the demo person who works on it, on the demo site of
 * the second Playwright web server (scripts/e2e-demo-server.sh, db/seeds/demo.ts). Shared by the
 * accessibility and layout tests (e2e/accessibility.spec.ts, e2e/layout.spec.ts). Record ids differ
 * per seed, so a page's path is found through the API with the signed-in page's session.
 * Not a test file: Playwright's runner picks up *.spec.ts only.
 */
import { expect, type Page } from '@playwright/test';
import { DEMO_PASSWORD } from '../db/seeds/accounts';

export const DEMO = `http://127.0.0.1:${Number(process.env.E2E_DEMO_PORT)}`;

export interface MainPage {
  /** short name used in test titles */
  name: string;
  /** demo user name, or '' for the signed-out sign-in page */
  user: string;
  path: string | ((page: Page) => Promise<string>);
  /** heading that shows the page has loaded */
  heading: string | RegExp;
  /** a form or a short list kept narrow on purpose (not stretched on wide screens) */
  narrow?: boolean;
}

async function api<T>(page: Page, path: string): Promise<T> {
  const res = await page.request.get(`${DEMO}${path}`);
  expect(res.status(), `GET ${path}`).toBe(200);
  return (await res.json()) as T;
}

interface LotRow {
  id: number;
  identityStatus: string;
}
async function lotWith(page: Page, identityStatus: string): Promise<number> {
  const lots = await api<LotRow[]>(page, '/api/lots');
  const lot = lots.find((l) => l.identityStatus === identityStatus);
  if (!lot) throw new Error(`the demo site has no lot in identity status ${identityStatus}`);
  return lot.id;
}

async function currentTestOf(page: Page, identityStatus: string): Promise<number> {
  const lot = await api<{ tests: { id: number }[] }>(page, `/api/lots/${await lotWith(page, identityStatus)}`);
  return lot.tests.at(-1)!.id;
}

export const MAIN_PAGES: MainPage[] = [
  { name: 'sign-in', user: '', path: '/sign-in', heading: 'Sign in', narrow: true },
  { name: 'operator work queue', user: 'olga', path: '/', heading: /^Work queue of/, narrow: true },
  { name: 'lots', user: 'olga', path: '/lots', heading: /Lots/ },
  {
    name: 'lot bench (partly tested)',
    user: 'olga',
    path: async (p) => `/lots/${await lotWith(p, 'testing')}`,
    heading: /L-\d{4}-\d+/,
  },
  {
    name: 'lot awaiting testing',
    user: 'olga',
    path: async (p) => `/lots/${await lotWith(p, 'awaiting-testing')}`,
    heading: /L-\d{4}-\d+/,
  },
  { name: 'instruments', user: 'olga', path: '/instruments', heading: 'Instruments' },
  {
    name: 'instrument',
    user: 'olga',
    path: async (p) => `/instruments/${(await api<{ id: number }[]>(p, '/api/instruments'))[0].id}`,
    heading: /FTIR/,
  },
  { name: 'certificates', user: 'olga', path: '/certificates', heading: /certificates/i },
  { name: 'verify a certificate', user: 'olga', path: '/certificates/verify', heading: /Verify/, narrow: true },
  { name: 'change password', user: 'olga', path: '/account/password', heading: /password/i, narrow: true },
  { name: 'tests to verify', user: 'victor', path: '/verification', heading: /verify/i },
  {
    name: 'verifier review',
    user: 'victor',
    path: async (p) => `/tests/${await currentTestOf(p, 'awaiting-verification')}/review`,
    heading: /L-\d{4}-\d+/,
  },
  { name: 'library', user: 'quinn', path: '/library', heading: /library/i },
  {
    name: 'library material',
    user: 'quinn',
    path: async (p) => {
      const materials = await api<{ id: number; code: string }[]>(p, '/api/materials');
      return `/library/materials/${materials.find((m) => m.code === 'CIT-AN')?.id ?? materials[0].id}`;
    },
    heading: /CIT-AN|\w/,
  },
  {
    name: 'draft reference',
    user: 'quinn',
    path: async (p) => {
      const refs = await api<{ id: number; status: string }[]>(p, '/api/references');
      return `/library/references/${refs.find((r) => r.status === 'draft')!.id}`;
    },
    heading: /REF-/,
  },
  { name: 'investigations', user: 'quinn', path: '/investigations', heading: /Investigations/ },
  {
    name: 'investigation',
    user: 'quinn',
    path: async (p) => {
      const list = await api<{ id: number; status: string }[]>(p, '/api/investigations');
      return `/investigations/${list.find((i) => i.status === 'open')!.id}`;
    },
    heading: /INV-/,
  },
  { name: 'data integrity', user: 'quinn', path: '/integrity', heading: /integrity/i },
  { name: 'trends', user: 'quinn', path: '/trending', heading: /Trend/i },
  { name: 'QA overview', user: 'quinn', path: '/qa-overview', heading: /overview/i },
  { name: 'audit-trail reviews', user: 'quinn', path: '/audit-reviews', heading: /review/i },
  { name: 'audit trail', user: 'aurelia', path: '/audit', heading: /Audit trail/ },
  {
    name: 'certificate',
    user: 'aurelia',
    path: async (p) => `/certificates/${(await api<{ items: { id: number }[] }>(p, '/api/certificates')).items[0].id}`,
    heading: /IC-/,
  },
  { name: 'auditor work queue', user: 'aurelia', path: '/', heading: /^Work queue of/, narrow: true },
  { name: 'suppliers and materials', user: 'quinn', path: '/master-data', heading: /Suppliers and materials/ },
  { name: 'user accounts', user: 'adam', path: '/admin/users', heading: /accounts/i },
  { name: 'ERP link', user: 'adam', path: '/admin/integration', heading: /ERP link/ },
];

export async function signInDemo(page: Page, username: string): Promise<void> {
  await page.goto(`${DEMO}/sign-in`);
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('heading', { name: /^Work queue of/ })).toBeVisible();
}

/** Opens a main page (signed in as its user by the caller) and waits until it has loaded. */
export async function openMainPage(page: Page, p: MainPage): Promise<string> {
  const path = typeof p.path === 'string' ? p.path : await p.path(page);
  await page.goto(`${DEMO}${path}`);
  await expect(page.getByRole('heading', { level: 1, name: p.heading }).first()).toBeVisible();
  await page.waitForLoadState('networkidle');
  // Lazy parts (plots, tables after their queries) settle.
  await expect(page.getByText(/^Loading/)).toHaveCount(0);
  return path;
}
