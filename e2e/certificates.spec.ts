/**
 * Issue 6, client side: a verifier signs the test of a lot verified; Drumline issues the signed
 * identity certificate on its own; it downloads from the certificates list; the verification
 * page accepts the downloaded file (byte-identical, signature valid, lot named), rejects a copy
 * with one byte changed, and checks a certificate by the number the QR code carries.
 *
 * The lot awaiting verification is written straight into the e2e database by the shared
 * certificate fixture (tests/api/fixtures-certificates.ts: real ATR-FTIR repeat scans of one
 * cotton sample from ../shared/reference-data, scored by the engine), performed by the demo
 * operator Olga. Victor's verification then goes through the real API, which decides the lot
 * outcome and issues the certificate exactly as in production.
 */
import fs from 'node:fs';
import { expect, test, type Page } from '@playwright/test';
import knexFactory from 'knex';
import { dbSettings, knexConfig } from '../db/config';
import { DEMO_PASSWORD } from '../db/seeds/accounts';
import { createPassedLot, type PassedLot } from '../tests/api/fixtures-certificates';

const DB = process.env.DRUMLINE_E2E_DB!;

async function signIn(page: Page, username: string) {
  await page.goto('/sign-in');
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('heading', { name: /^Work queue of/ })).toBeVisible();
}

let lot: PassedLot;

test.beforeAll(async () => {
  const db = knexFactory(knexConfig(dbSettings('runtime', DB), { min: 0, max: 2 }));
  try {
    const olga = await db('app_user').where({ username: 'olga' }).first();
    const quinn = await db('app_user').where({ username: 'quinn' }).first();
    if (!olga || !quinn) throw new Error('the e2e database lacks the demo accounts');
    lot = await createPassedLot(db, {
      containers: 3,
      stage: 'awaiting-verification',
      users: {
        operator: { id: olga.id, username: 'olga', fullName: olga.full_name, password: DEMO_PASSWORD },
        qa: { id: quinn.id, username: 'quinn', fullName: quinn.full_name, password: DEMO_PASSWORD },
      },
    });
  } finally {
    await db.destroy();
  }
});

test('after verification the certificate downloads; the verification page accepts it and rejects a tampered copy', async ({
  page,
}, testInfo) => {
  test.setTimeout(120_000);

  // Victor (verifier, not the performer) signs the test verified through the API of the running server.
  await signIn(page, 'victor');
  const res = await page.request.post(`/api/tests/${lot.testId}/verify`, {
    data: { signature: { username: 'victor', password: DEMO_PASSWORD } },
  });
  expect(res.status(), await res.text()).toBe(200);
  const body = await res.json();
  expect(body).toMatchObject({ outcome: 'passed', certificate: 'issued' });

  // The certificate is listed; search by lot, then download it.
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Identity certificates' }).click();
  await expect(page.getByRole('heading', { name: 'Identity certificates' })).toBeVisible();
  await page.getByLabel('Lot', { exact: true }).fill(lot.lotNumber);
  await page.getByRole('button', { name: 'Search' }).click();
  const table = page.getByRole('table', { name: 'Identity certificates' });
  const row = table.getByRole('row').filter({ hasText: lot.lotNumber });
  await expect(row).toHaveCount(1);
  await expect(row).toContainText('Current');
  const number = (await row.getByRole('link', { name: /^IC-\d{4}-\d{5}$/ }).textContent())!.trim();
  const downloadPromise = page.waitForEvent('download');
  await row.getByRole('link', { name: `Download certificate ${number}` }).click();
  const download = await downloadPromise;
  expect(download.suggestedFilename()).toBe(`${number}.pdf`);
  const file = testInfo.outputPath(`${number}.pdf`);
  await download.saveAs(file);
  const pdf = fs.readFileSync(file);
  expect(pdf.subarray(0, 5).toString()).toBe('%PDF-');
  expect(pdf.toString('latin1')).toContain('/ETSI.CAdES.detached');

  // The verification page accepts the downloaded file.
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Verify a certificate' }).click();
  await expect(page.getByRole('heading', { name: 'Verify an identity certificate' })).toBeVisible();
  await page.locator('input[type=file]').setInputFiles(file);
  let result = page.getByTestId('verification-result');
  await expect(result).toHaveAttribute('data-verdict', 'authentic');
  await expect(result.getByRole('heading')).toContainText('Authentic');
  await expect(result.getByTestId('byte-identical')).toContainText('Yes');
  await expect(result.getByTestId('signature-valid')).toContainText('Yes');
  await expect(result.getByTestId('signed-by-site')).toContainText('Yes');
  await expect(result.getByTestId('verified-lot')).toContainText(lot.lotNumber);
  await expect(result).toContainText(number);

  // A copy with one byte changed inside the signed range is rejected.
  const tampered = Buffer.from(pdf);
  const at = tampered.indexOf(`Identity certificate ${number}`);
  expect(at).toBeGreaterThan(0);
  tampered[at] = 'i'.charCodeAt(0);
  const tamperedFile = testInfo.outputPath(`${number}-tampered.pdf`);
  fs.writeFileSync(tamperedFile, tampered);
  await page.locator('input[type=file]').setInputFiles(tamperedFile);
  result = page.getByTestId('verification-result');
  await expect(result).toHaveAttribute('data-verdict', 'not authentic');
  await expect(result.getByRole('heading')).toContainText('Not authentic');
  await expect(result.getByTestId('byte-identical')).toContainText('No');
  await expect(result.getByTestId('signature-valid')).toContainText('No');
  await expect(result).toContainText('changed after signing');

  // The QR code's address checks the stored certificate by its number.
  await page.goto(`/certificates/verify?number=${number}`);
  result = page.getByTestId('verification-result');
  await expect(result).toHaveAttribute('data-verdict', 'authentic');
  await expect(result).toContainText('Checked the stored certificate by its number');
  await expect(result.getByTestId('verified-lot')).toContainText(lot.lotNumber);
});
