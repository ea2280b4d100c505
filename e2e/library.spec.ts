/**
 * Issue 4 and issue 11, client side: a QA manager creates a material (she writes its identity method
 * version 1), uploads a reference spectrum and sees its characteristic bands with their assignments;
 * a second QA manager (the author and uploader may not approve) approves the first method version
 * together with its first reference with the password again, and the signatures (printed name,
 * meaning, date and time) appear on the method and the reference (21 CFR 11.50).
 * Spectrum: a real ATR-FTIR para-aramid fibre scan from ../shared/reference-data/atr-ftir-fibres
 * (FasTEX-KCL, MIT; see that folder's README), not used by other browser tests, so the
 * specificity gate has no look-alike in the library.
 */
import path from 'node:path';
import { expect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD } from '../db/seeds/accounts';
import { repoRoot } from '../db/config';

const SPECTRUM = path.resolve(repoRoot, '../shared/reference-data/atr-ftir-fibres/para-aramid_s049.csv');

async function signIn(page: Page, username: string) {
  await page.goto('/sign-in');
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('heading', { name: /^Work queue of/ })).toBeVisible();
}

async function signOut(page: Page) {
  await page.getByRole('button', { name: 'Sign out' }).click();
  await expect(page).toHaveURL(/\/sign-in$/);
}

/** Fills the e-signature dialog (first signing of a session: user name and password). */
async function sign(page: Page, username: string, confirm: string) {
  const dialog = page.getByRole('dialog');
  const user = dialog.getByLabel('User name');
  if (await user.isVisible()) await user.fill(username);
  await dialog.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await dialog.getByRole('button', { name: confirm }).click();
}

test('QA writes a method and uploads a reference, sees its bands; a second QA manager approves the first method version with it and the signatures appear', async ({
  page,
}) => {
  test.setTimeout(180_000);
  const code = `PAR${Date.now().toString(36).toUpperCase()}`;

  // Quinn (QA) creates the material: she writes identity method version 1.
  await signIn(page, 'quinn');
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Reference library' }).click();
  await expect(page.getByRole('heading', { name: 'Reference library' })).toBeVisible();
  await page.getByRole('button', { name: 'New material' }).click();
  const form = page.getByRole('form', { name: 'New material' });
  await form.getByLabel('Code').fill(code);
  await form.getByLabel('Name').fill('Para-aramid fibre');
  await form.getByLabel('Grade').fill('staple, 1.7 dtex');
  await form.getByRole('button', { name: 'Create material' }).click();
  await expect(page.getByRole('heading', { name: `${code} · Para-aramid fibre` })).toBeVisible();
  const materialUrl = page.url();

  const v1 = page.getByTestId('method-v1');
  await expect(v1).toContainText('Draft');
  // the author never approves her own version
  await expect(v1.getByRole('button', { name: 'Approve method version' })).toBeDisabled();

  // Upload the reference spectrum: per-file progress ends with the draft's code and its bands.
  await page.getByRole('button', { name: 'Upload reference spectra' }).click();
  const up = page.getByRole('dialog');
  await up.getByLabel('Supplier', { exact: true }).fill('Northfield Fibres');
  await up.getByLabel('Supplier lot').fill('NF-2026-118');
  await up.getByLabel('Choose files').setInputFiles(SPECTRUM);
  await expect(up.getByText(/Stored as draft/)).toBeVisible();
  const refCode = (await up.getByRole('button', { name: new RegExp(`^REF-${code}-`) }).textContent())!.trim();
  await up.getByRole('button', { name: refCode }).click();

  // Reference page: the bands with their group-frequency assignments; the uploader cannot approve.
  await expect(page.getByRole('heading', { name: `Reference ${refCode}` })).toBeVisible();
  const referenceUrl = page.url();
  const bands = page.getByRole('table', { name: 'Characteristic bands' });
  await expect(bands.getByTestId('band-row').first()).toBeVisible();
  expect(await bands.getByTestId('band-row').count()).toBeGreaterThan(3);
  // para-aramid: amide I (C=O stretch) near 1640 cm-1 (standard IR correlation tables, from memory).
  // Issue 18 item 4: no assignment until QA sets one; QA reviewing the draft sees the table's
  // candidates, for information, with amide I first.
  const amideRow = bands
    .getByTestId('band-row')
    .filter({ hasText: /16[3-5]\d\.\d cm⁻¹/ })
    .first();
  await expect(amideRow.getByTestId('band-assignment')).toHaveText('not set by QA');
  const candidates = page.getByTestId('band-candidates');
  await candidates.getByText('Correlation-table candidates, for information').click();
  await expect(
    candidates
      .getByRole('listitem')
      .filter({ hasText: /^16[3-5]\d\.\d cm⁻¹/ })
      .first(),
  ).toContainText(/^16[3-5]\d\.\d cm⁻¹: [^;]*amide/i);
  await expect(page.getByRole('group', { name: new RegExp(`^Reference ${refCode}`) })).toBeVisible();
  await expect(page.getByRole('button', { name: 'Approve reference' })).toBeDisabled();
  await expect(page.getByRole('note')).toContainText('Another QA manager must approve it');
  await expect(page.getByRole('heading', { name: 'Signatures' })).toBeVisible();
  await expect(page.getByText('Not approved yet: no signature.')).toBeVisible();
  await signOut(page);

  // Irene (QA) approves method version 1 together with its first reference, with her password.
  await signIn(page, 'irene');
  await page.goto(materialUrl);
  const card = page.getByTestId('method-v1');
  await card.getByRole('button', { name: 'Approve method version' }).click();
  const dialog = page.getByRole('dialog');
  await expect(dialog).toContainText('and its first 1 reference spectra');
  // a wrong password is refused in words, nothing is signed
  const user = dialog.getByLabel('User name');
  if (await user.isVisible()) await user.fill('irene');
  await dialog.getByLabel('Password', { exact: true }).fill('not-my-password');
  await dialog.getByRole('button', { name: 'Approve method version' }).click();
  await expect(dialog.getByRole('alert')).toContainText('The password is not correct');
  await sign(page, 'irene', 'Approve method version');
  await expect(page.getByRole('dialog')).toHaveCount(0);
  await expect(card).toContainText('Approved');
  await expect(card.getByTestId('signature')).toContainText('Irene Castell');
  await expect(card.getByRole('link', { name: 'Download the validation record (PDF)' })).toBeVisible();

  // The reference was approved with it: its signature appears on the reference page.
  await page.goto(referenceUrl);
  await expect(page.getByRole('heading', { name: `Reference ${refCode}` })).toBeVisible();
  const signature = page.getByTestId('signature').first();
  await expect(signature).toContainText('Irene Castell');
  await expect(signature).toContainText('Approved');
  await expect(signature.locator('time')).toHaveAttribute('datetime', /^\d{4}-\d\d-\d\dT/);
  await expect(signature).toContainText(/content SHA-256 [0-9a-f]{64}/);
  await expect(page.getByRole('button', { name: 'Approve reference' })).toHaveCount(0);
  await expect(page.getByRole('button', { name: 'Edit bands' })).toHaveCount(0);
});
