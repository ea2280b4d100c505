/**
 * Issues 5 and 14 in the browser (Debian Chromium): receipt from an approved source, the signed
 * sampling record, every-container testing, two-person verification, QA release with the status
 * labels downloaded, and a failing container with its investigation.
 *
 * The e2e server (scripts/e2e-server.sh) seeds an approved library with scripts/e2e-seed-library.ts:
 * nylon 6,6 and polyester (PET) fibres with real reference spectra from ../shared/reference-data
 * and the instrument "ATR bench E2E-1" with a passing polystyrene check. The uploaded samples are
 * other real scans of the same fibres, so every verdict below is the engine's own.
 * Demo accounts (db/seeds/accounts.ts): olga operator, victor verifier, quinn QA, adam admin.
 */
import { expect, test, type Page } from '@playwright/test';
import { distinctAcquisition } from '../db/seeds/testing-library';
import { sign, signedIn } from './session';

const NYLON = 'Nylon 6,6 staple fibre';
const PET = 'Polyester (PET) staple fibre';
const INSTRUMENT = 'ATR bench E2E-1';

/**
 * A new acquisition of a real sample (its spectrum with fresh noise at its own level): Drumline
 * refuses the same spectrum twice, and these tests share one database (docs/provenance.md).
 */
function spectrum(file: string, asName: string) {
  const f = distinctAcquisition(`atr-ftir-fibres/${file}`, asName);
  return { name: asName, mimeType: 'text/csv', buffer: f.buffer };
}

async function registerLot(
  page: Page,
  material: string,
  containers: number,
): Promise<{ lotNumber: string; url: string }> {
  await page.goto('/lots');
  await page.getByRole('button', { name: 'Register a received lot' }).click();
  const materialSelect = page.getByLabel('Material grade');
  const option = materialSelect.locator('option', { hasText: material });
  await materialSelect.selectOption({ value: (await option.getAttribute('value')) ?? '' });
  const supplier = page.getByLabel('Supplier (approved source)');
  const supplierOption = supplier.locator('option', { hasText: 'Harrowgate Fibre Supply' });
  await expect(supplierOption).toHaveCount(1);
  await supplier.selectOption({ value: (await supplierOption.getAttribute('value')) ?? '' });
  await page.getByLabel("Supplier's lot number").fill(`HF-${Date.now().toString(36).toUpperCase()}`);
  await page.getByLabel('Number of containers').fill(String(containers));
  await page.getByRole('button', { name: 'Register lot and create labels' }).click();
  const lotNumber = (await page.getByTestId('lot-number').textContent({ timeout: 20_000 }))!.trim();
  expect(lotNumber).toMatch(/^L-\d{4}-\d{5}$/);
  return { lotNumber, url: page.url() };
}

/** Sampling precedes testing: the signed line clearance, then the signed sampling record of every container. */
async function sampleLot(page: Page, username: string) {
  await page.getByRole('button', { name: 'Sign line clearance' }).click();
  await sign(page, username, 'Sign line clearance');
  await page.getByLabel('Sampling tool').fill('Stainless steel sampling spear SP-02');
  await page.getByLabel('Reserve sample kept in').fill('Reserve store R2');
  await page.getByRole('button', { name: 'Sign sampling record' }).click();
  await sign(page, username, 'Sign sampling record');
  await expect(page.getByTestId('sampling-record')).toBeVisible();
}

async function startTesting(page: Page) {
  const select = page.getByLabel('Instrument', { exact: true });
  const option = select.locator('option', { hasText: INSTRUMENT });
  await select.selectOption({ value: (await option.getAttribute('value')) ?? '' });
  await page.getByRole('button', { name: 'Start testing' }).click();
  await expect(page.getByLabel('Scan or type the container label, then Enter')).toBeVisible();
}

test('operator registers a 3-container lot, uploads one at a time and several at once, signs; a verifier signs; the lot passes', async ({
  browser,
}) => {
  test.setTimeout(180_000);
  const olga = await signedIn(browser, 'olga');
  const { lotNumber, url } = await registerLot(olga, NYLON, 3);
  await expect(olga.getByTestId('identity-status')).toContainText('Awaiting testing');
  // the label sheet is a PDF
  const labels = await olga.request.get(url.replace(/\/lots\/(\d+).*/, '/api/lots/$1/labels.pdf'));
  expect(labels.headers()['content-type']).toBe('application/pdf');

  await sampleLot(olga, 'olga');
  await startTesting(olga);

  // One at a time: the scanner types the label and Enter, then the file of that container.
  const scan = olga.getByLabel('Scan or type the container label, then Enter');
  await scan.fill(`${lotNumber}-001`);
  await scan.press('Enter');
  await expect(olga.getByTestId('selected-container')).toHaveText(`Container ${lotNumber}-001`);
  await olga
    .locator('section[aria-label^="Upload for"] input[type=file]')
    .setInputFiles(spectrum('nylon66_s091_r2.csv', `${lotNumber}-001.csv`));
  await expect(olga.locator('section[aria-label^="Upload for"] [data-status=done]')).toContainText('Pass', {
    timeout: 30_000,
  });
  await expect(olga.getByTestId(`container-${lotNumber}-001`)).toContainText('Pass');

  // Several files: matched by the label in the name, confirmed, then uploaded with progress.
  await olga.getByRole('tab', { name: 'Several files' }).click();
  await olga
    .getByTestId('multi-file-input')
    .setInputFiles([
      spectrum('nylon66_s090.csv', `${lotNumber}-002.csv`),
      spectrum('nylon66_s093.csv', `scan ${lotNumber}-003 repeat.csv`),
    ]);
  const table = olga.getByRole('table', { name: 'Files and containers' });
  await expect(table.getByRole('row')).toHaveCount(3);
  await expect(table).toContainText(`${lotNumber}-002`);
  await expect(table).toContainText(`${lotNumber}-003`);
  await expect(table.getByText('waiting for confirmation')).toHaveCount(2);
  await olga.getByRole('button', { name: 'Upload 2 matched files' }).click();
  await expect(table.locator('tr[data-state=done]')).toHaveCount(2, { timeout: 30_000 });
  await expect(table.locator('tr[data-state=done]').first()).toContainText('Pass');
  await expect(olga.getByText('3 of 3 containers have a valid result')).toBeVisible();

  await olga.getByRole('button', { name: 'Sign as performed' }).click();
  await sign(olga, 'olga', 'Sign as performed');
  await expect(olga.getByTestId('identity-status')).toContainText('Awaiting verification');

  // Victor: the test waits in his work queue; he reviews and signs verified.
  const victor = await signedIn(browser, 'victor');
  const entry = victor.getByRole('link', { name: new RegExp(`${lotNumber}`) });
  await expect(entry).toBeVisible();
  await entry.click();
  await expect(victor.getByRole('heading', { name: `Review of attempt 1, lot ${lotNumber}` })).toBeVisible();
  for (const n of ['001', '002', '003'])
    await expect(victor.getByTestId(`review-${lotNumber}-${n}`)).toContainText('Pass');
  await expect(victor.getByText(/Instrument checks used/)).toBeVisible();
  // every measurement in order, with what each file states (docs/provenance.md)
  await expect(victor.getByTestId('measurement-history')).toContainText(`${lotNumber}-003`);
  await expect(victor.getByTestId('measurement-history')).toContainText('not stated in the file');
  await expect(victor.getByTestId('spectrum-difference').first()).toBeVisible();
  await victor.getByRole('button', { name: 'Sign as verified' }).click();
  await sign(victor, 'victor', 'Sign as verified');
  await expect(victor.getByRole('status').filter({ hasText: 'passed identity' })).toBeVisible();

  await olga.goto(url);
  await expect(olga.getByTestId('identity-status')).toContainText('Identity passed');
  for (const n of ['001', '002', '003'])
    await expect(olga.getByTestId(`lot-container-${lotNumber}-${n}`)).toContainText('Pass');
  // the certificate step ran after the verification committed: issued (or, if it could not be made, pending)
  await expect(
    olga.getByRole('main').getByText(/^Identity certificate IC-\d{4}-\d+ issued|certificate is pending/),
  ).toBeVisible();

  // QA disposition (issue 14): Quinn records the release check and releases the lot with a signature;
  // every container then shows RELEASED and its status label prints as a PDF.
  const quinn = await signedIn(browser, 'quinn');
  await expect(quinn.getByRole('link', { name: new RegExp(lotNumber) })).toBeVisible();
  await quinn.goto(url);
  await expect(quinn.getByTestId('condition-checks')).toContainText('Open');
  await quinn.getByRole('button', { name: 'Conforms' }).click();
  await quinn
    .getByRole('dialog')
    .getByLabel(/^Reference/)
    .fill('CoA HF-7781');
  await sign(quinn, 'quinn', 'Sign check');
  await expect(quinn.getByTestId('condition-checks')).toContainText('Met');
  await quinn.getByRole('button', { name: 'Release lot' }).click();
  await sign(quinn, 'quinn', 'Sign as released');
  await expect(quinn.getByTestId('disposition-decision')).toContainText(/Released by .* retest by \d{4}-\d{2}-\d{2}/);
  for (const n of ['001', '002', '003'])
    await expect(quinn.getByTestId(`container-status-${lotNumber}-${n}`)).toContainText('RELEASED');
  const href = await quinn.getByTestId('status-labels').getAttribute('href');
  const pdf = await quinn.request.get(href!);
  expect(pdf.headers()['content-type']).toBe('application/pdf');
  expect((await pdf.body()).subarray(0, 5).toString()).toBe('%PDF-');

  // Retest (issue 14 item 5): Quinn starts it with a reason and a signature; the lot is back in
  // quarantine, its containers under test again, awaiting a new attempt under the current method.
  await quinn.getByRole('button', { name: 'Start retest' }).click();
  await quinn.getByRole('dialog').getByLabel('Reason').fill('Retest date reached; lot still in stock for production.');
  await sign(quinn, 'quinn', 'Sign retest start');
  await expect(quinn.getByTestId('retests')).toContainText('Retest started by');
  for (const n of ['001', '002', '003'])
    await expect(quinn.getByTestId(`container-status-${lotNumber}-${n}`)).toContainText('SAMPLED');
  await expect(quinn.getByRole('button', { name: 'Release lot' })).toBeDisabled();
});

test('a failing container opens an investigation with the library hint, and QA receives the e-mail', async ({
  browser,
}) => {
  test.setTimeout(180_000);
  const olga = await signedIn(browser, 'olga');
  const { lotNumber, url } = await registerLot(olga, NYLON, 2);
  await sampleLot(olga, 'olga');
  await startTesting(olga);
  // container 002 holds polyester: a real mix-up
  await olga.getByRole('tab', { name: 'Several files' }).click();
  await olga
    .getByTestId('multi-file-input')
    .setInputFiles([
      spectrum('nylon66_s090.csv', `${lotNumber}-001.csv`),
      spectrum('polyester-PET_s135_r2.csv', `${lotNumber}-002.csv`),
    ]);
  await olga.getByRole('button', { name: 'Upload 2 matched files' }).click();
  const table = olga.getByRole('table', { name: 'Files and containers' });
  await expect(table.locator('tr[data-state=done]')).toHaveCount(2, { timeout: 30_000 });
  await expect(table.locator('tr', { hasText: `${lotNumber}-002` })).toContainText('Fail');
  // the operator sees the mix-up hint at once and cannot re-measure the failed container
  await olga.getByRole('button', { name: `Select ${lotNumber}-002` }).click();
  await expect(olga.getByTestId('library-hint')).toContainText(`Closest approved materials: ${PET}`);
  const scan = olga.getByLabel('Scan or type the container label, then Enter');
  await scan.fill(`${lotNumber}-002`);
  await scan.press('Enter');
  await expect(olga.getByRole('alert').filter({ hasText: 'needs QA authorisation' })).toBeVisible();
  await olga.getByRole('button', { name: 'Sign as performed' }).click();
  await sign(olga, 'olga', 'Sign as performed');

  const victor = await signedIn(browser, 'victor');
  await victor.getByRole('link', { name: new RegExp(`${lotNumber}`) }).click();
  await expect(victor.getByTestId(`review-${lotNumber}-002`)).toContainText('Fail');
  await expect(victor.getByRole('button', { name: 'Return to operator' })).toHaveCount(0);
  await victor.getByRole('button', { name: 'Sign as verified' }).click();
  await sign(victor, 'victor', 'Sign as verified');
  const outcome = victor.getByRole('status').filter({ hasText: 'failed identity' });
  await expect(outcome).toBeVisible();
  const invNumber = /investigation (INV-\d{4}-\d{4})/.exec((await outcome.textContent()) ?? '')?.[1];
  expect(invNumber).toBeTruthy();

  await olga.goto(url);
  await expect(olga.getByTestId('identity-status')).toContainText('Identity failed');
  await expect(olga.getByText('Quarantine', { exact: true })).toBeVisible();

  // QA: the investigation is in the work queue, with the failing container and the library hint.
  const quinn = await signedIn(browser, 'quinn');
  await quinn.getByRole('link', { name: invNumber! }).click();
  await expect(quinn.getByTestId(`failing-${lotNumber}-002`)).toBeVisible();
  await expect(quinn.getByTestId('library-hint')).toContainText(`Closest approved materials: ${PET}`);
  await expect(quinn.getByRole('heading', { name: 'Phase I laboratory check', exact: true })).toBeVisible();

  // The fake SMTP server captured the mail to QA (read on the admin's development mail page).
  const adam = await signedIn(browser, 'adam');
  await expect
    .poll(
      async () => {
        const res = await adam.request.get('/api/dev/mail');
        const mails = (await res.json()) as { to: string[]; subject: string; text: string }[];
        return (
          mails.find(
            (m) => m.subject.includes(`${invNumber} opened`) && m.to.includes('quinn.okafor@lindenhall.example'),
          ) ?? null
        );
      },
      { timeout: 20_000, intervals: [500, 1000] },
    )
    .toMatchObject({ text: expect.stringContaining(PET) });
});
