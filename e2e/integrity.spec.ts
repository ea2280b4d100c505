/**
 * Issue 12 item 3 in the browser: a byte of a stored raw file is changed behind the application
 * (owner account, protecting trigger dropped for the one statement and put back); the auditor asks
 * for an integrity sweep and sees it find the mismatch; the verifier's review shows the warning and
 * offers no signature; QA finds the alert in the work queue and signs it off with an e-signature.
 * The lot awaiting verification comes from the shared certificate fixture (real ATR-FTIR spectra),
 * performed by the demo operator Olga.
 */
import { expect, test, type Page } from '@playwright/test';
import knexFactory, { type Knex } from 'knex';
import { dbSettings, knexConfig } from '../db/config';
import { DEMO_PASSWORD } from '../db/seeds/accounts';
import { createPassedLot, type PassedLot } from '../tests/api/fixtures-certificates';
import { untyped } from '../tests/api/untyped';

const DB = process.env.DRUMLINE_E2E_DB!;

async function signIn(page: Page, username: string) {
  await page.goto('/sign-in');
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('heading', { name: /^Work queue of/ })).toBeVisible();
}

async function withoutTrigger(owner: Knex, name: string, fn: () => Promise<unknown>) {
  const [rows] = (await owner.raw(
    'SELECT action_timing AS t, event_manipulation AS e, event_object_table AS tb, action_statement AS b ' +
      'FROM information_schema.triggers WHERE trigger_schema = DATABASE() AND trigger_name = ?',
    [name],
  )) as [{ t: string; e: string; tb: string; b: string }[]];
  await owner.raw(`DROP TRIGGER ${name}`);
  try {
    await fn();
  } finally {
    const t = rows[0];
    await owner.raw(`CREATE TRIGGER ${name} ${t.t} ${t.e} ON ${t.tb} FOR EACH ROW ${t.b}`);
  }
}

let lot: PassedLot;
let fileName: string;

test.beforeAll(async () => {
  const db = knexFactory(knexConfig(dbSettings('runtime', DB), { min: 0, max: 2 }));
  const owner = knexFactory(knexConfig(dbSettings('owner', DB), { min: 0, max: 1 }));
  try {
    const olga = await db('app_user').where({ username: 'olga' }).first();
    const quinn = await db('app_user').where({ username: 'quinn' }).first();
    if (!olga || !quinn) throw new Error('the e2e database lacks the demo accounts');
    lot = await createPassedLot(db, {
      containers: 2,
      stage: 'awaiting-verification',
      users: {
        operator: { id: olga.id, username: 'olga', fullName: olga.full_name, password: DEMO_PASSWORD },
        qa: { id: quinn.id, username: 'quinn', fullName: quinn.full_name, password: DEMO_PASSWORD },
      },
    });
    const m = (await db('measurement').where({ id: lot.containers[0].measurementId }).first())!;
    const f = (await db('stored_file').where({ id: m.file_id }).first())!;
    fileName = f.file_name;
    const data = Buffer.from(f.data);
    data[data.indexOf('.')] = ','.charCodeAt(0);
    await withoutTrigger(owner, 'stored_file_no_update', () =>
      untyped(owner, 'stored_file').where({ id: f.id }).update({ data }),
    );
  } finally {
    await owner.destroy();
    await db.destroy();
  }
});

test('a changed byte in a raw file: the sweep finds it, the review shows it, QA signs the alert off', async ({
  page,
  browser,
}) => {
  test.setTimeout(120_000);
  // The auditor asks for a sweep and watches it finish with a mismatch.
  await signIn(page, 'aurelia');
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Data integrity' }).click();
  await page.getByRole('button', { name: 'Run the integrity sweep now' }).click();
  const latest = page.getByTestId('integrity-run').first();
  await expect(latest).toContainText('finished', { timeout: 60_000 });
  await expect(latest.locator('td').last()).not.toHaveText('0');
  const alert = page.getByTestId('integrity-alert').filter({ hasText: `lot ${lot.lotNumber}` });
  await expect(alert).toContainText('Stored file no longer matches its SHA-256');
  await expect(alert).toContainText('open');

  // The verifier's review says so, and offers no signature.
  const v = await (await browser.newContext()).newPage();
  await signIn(v, 'victor');
  await v.goto(`/tests/${lot.testId}/review`);
  const warning = v.getByTestId('integrity-warning');
  await expect(warning).toContainText('The stored data no longer match what was recorded or signed');
  await expect(warning).toContainText(fileName);
  await expect(v.getByRole('button', { name: 'Sign as verified' })).toBeDisabled();

  // QA finds it in the work queue and signs it off.
  const q = await (await browser.newContext()).newPage();
  await signIn(q, 'quinn');
  const widget = q
    .getByRole('main')
    .getByTestId('integrity-alert')
    .filter({ hasText: `lot ${lot.lotNumber}` });
  await expect(widget).toBeVisible();
  await widget.getByRole('link').click();
  await expect(q.getByRole('heading', { name: /^Integrity alert \d+$/ })).toBeVisible();
  await q.getByLabel('What was done about it').fill('Deviation DEV-E2E-7 opened; container 001 re-sampled.');
  await q.getByRole('button', { name: 'Sign off', exact: true }).click();
  const dialog = q.getByRole('dialog', { name: /^Sign off integrity alert/ });
  await dialog.getByLabel('User name').fill('quinn');
  await dialog.getByLabel('Password').fill(DEMO_PASSWORD);
  await dialog.getByRole('button', { name: 'Sign off' }).click();
  await expect(q.getByRole('heading', { name: 'Signed off' })).toBeVisible();
  await expect(q.getByText('Deviation DEV-E2E-7 opened; container 001 re-sampled.', { exact: true })).toBeVisible();

  // The review still refuses a signature over the changed bytes, and names the signed-off alert.
  await v.reload();
  await expect(v.getByTestId('integrity-warning')).toContainText('Signed off by Quinn Okafor');
  await expect(v.getByRole('button', { name: 'Sign as verified' })).toBeDisabled();
});
