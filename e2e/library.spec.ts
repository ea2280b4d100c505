/**
 * Issue 4, client side: a QA manager creates a material, approves its identity method, uploads a
 * reference spectrum and sees its characteristic bands with their assignments; a second QA
 * manager (the uploader may not approve) approves it with the password again, and the signature
 * (printed name, meaning, date and time) appears on the reference page (21 CFR 11.50).
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

test('QA uploads a reference, sees its bands; a second QA manager approves it with the password and the signature appears', async ({
  page,
}) => {
  test.setTimeout(180_000);
  const code = `PAR${Date.now().toString(36).toUpperCase()}`;

  // Quinn (QA) creates the material and approves identity method version 1.
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

  const v1 = page.getByTestId('method-v1');
  await expect(v1).toContainText('Draft');
  await v1.getByRole('button', { name: 'Approve method version' }).click();
  await sign(page, 'quinn', 'Approve method version');
  await expect(v1).toContainText('Approved');
  await expect(v1.getByTestId('signature')).toContainText('Quinn Okafor');

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
  const bands = page.getByRole('table', { name: 'Characteristic bands' });
  await expect(bands.getByTestId('band-row').first()).toBeVisible();
  expect(await bands.getByTestId('band-row').count()).toBeGreaterThan(3);
  // para-aramid: amide I (C=O stretch) near 1640 cm-1 (standard IR correlation tables, from memory)
  await expect(
    bands
      .getByTestId('band-row')
      .filter({ hasText: /16[3-5]\d\.\d cm⁻¹/ })
      .first(),
  ).toContainText(/C=O|amide/i);
  await expect(page.getByRole('group', { name: new RegExp(`^Reference ${refCode}`) })).toBeVisible();
  await expect(page.getByRole('button', { name: 'Approve reference' })).toBeDisabled();
  await expect(page.getByRole('note')).toContainText('Another QA manager must approve it');
  await expect(page.getByRole('heading', { name: 'Signatures' })).toBeVisible();
  await expect(page.getByText('Not approved yet: no signature.')).toBeVisible();
  await signOut(page);

  // Irene (QA) finds it in her work queue and approves it with her password.
  await signIn(page, 'irene');
  const widget = page.getByRole('region', { name: 'Reference spectra awaiting approval' });
  await widget.getByRole('link', { name: refCode }).click();
  await expect(page.getByRole('heading', { name: `Reference ${refCode}` })).toBeVisible();
  await page.getByRole('button', { name: 'Approve reference' }).click();
  const dialog = page.getByRole('dialog');
  await expect(dialog.getByTestId('gate-summary')).toBeVisible();
  // a wrong password is refused in words, nothing is signed
  const user = dialog.getByLabel('User name');
  if (await user.isVisible()) await user.fill('irene');
  await dialog.getByLabel('Password', { exact: true }).fill('not-my-password');
  await dialog.getByRole('button', { name: 'Approve reference' }).click();
  await expect(dialog.getByRole('alert')).toContainText('The password is not correct');
  await sign(page, 'irene', 'Approve reference');
  await expect(page.getByRole('dialog')).toHaveCount(0);

  const signature = page.getByTestId('signature').first();
  await expect(signature).toContainText('Irene Castell');
  await expect(signature).toContainText('Approved');
  await expect(signature.locator('time')).toHaveAttribute('datetime', /^\d{4}-\d\d-\d\dT/);
  await expect(signature).toContainText(/content SHA-256 [0-9a-f]{64}/);
  await expect(page.getByText('Approved', { exact: true }).first()).toBeVisible();
  await expect(page.getByRole('button', { name: 'Approve reference' })).toHaveCount(0);
  await expect(page.getByRole('button', { name: 'Edit bands' })).toHaveCount(0);
});
