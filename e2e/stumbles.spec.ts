/**
 * Issue 18, item 7: smaller stumbles, on the demo site (e2e/main-pages.ts). One menu item
 * highlighted at a time; the administrator's work-queue link opens that account; a new account's
 * temporary password disappears once the administrator turns to another account; the investigation
 * page shows the failing spectrum's overlay; after "verified, certificate issued" a link opens the
 * certificate; instrument names look like the links they are.
 */
import { expect, test } from '@playwright/test';
import { DEMO_PASSWORD } from '../db/seeds/accounts';
import { DEMO, MAIN_PAGES, openMainPage, signInDemo } from './main-pages';

test('one menu item is highlighted at a time', async ({ page }) => {
  await signInDemo(page, 'olga');
  const nav = page.getByRole('navigation', { name: 'Main' });
  await page.goto(`${DEMO}/certificates/verify`);
  await expect(nav.locator('[aria-current=page]')).toHaveCount(1);
  await expect(nav.locator('[aria-current=page]')).toHaveText('Verify a certificate');
  await expect(nav.locator('.bg-petrol-soft')).toHaveCount(1);
  await page.goto(`${DEMO}/certificates`);
  await expect(nav.locator('[aria-current=page]')).toHaveText('Identity certificates');
  await expect(nav.locator('.bg-petrol-soft')).toHaveCount(1);
});

test("the administrator's work-queue link opens that account; a temporary password is gone once he moves on", async ({
  page,
}) => {
  await signInDemo(page, 'adam');
  await page.getByRole('main').getByRole('link', { name: 'Tomas Berg' }).click();
  await expect(page).toHaveURL(/\/admin\/users\?account=\d+$/);
  await expect(page.getByRole('row', { selected: true })).toContainText('tomas');

  const username = `e2e.stumble.${Date.now().toString(36)}`;
  await page.getByRole('button', { name: 'Create account' }).click();
  const form = page.getByRole('form', { name: 'New account' });
  await form.getByLabel('User name').fill(username);
  await form.getByLabel('Full name').fill('Ines Varga');
  await form.getByLabel('E-mail').fill(`${username}@lindenhall.example`);
  await form.getByLabel('Temporary password').fill('Temporary-Pass-4711');
  await form.getByLabel(/^Operator/).check();
  await form.getByRole('button', { name: 'Create account' }).click();
  await expect(page.getByTestId('notice')).toContainText('Temporary password: Temporary-Pass-4711');
  // Another account chosen: the password is no longer on screen.
  await page.getByRole('row').filter({ hasText: 'aurelia' }).click();
  await expect(page.getByText('Temporary-Pass-4711')).toHaveCount(0);
  await expect(page).toHaveURL(/account=\d+/);
});

test('the investigation page shows the failing spectrum over its closest reference', async ({ page }) => {
  await signInDemo(page, 'quinn');
  await openMainPage(
    page,
    MAIN_PAGES.find((m) => m.name === 'investigation')!,
  );
  const failing = page.locator('[data-testid^="failing-"]').first();
  await expect(failing.getByText('Failing spectrum, closest reference and difference')).toBeVisible();
  await expect(failing.getByRole('group').first()).toBeVisible();
  await expect(failing.locator('canvas').first()).toBeVisible();
});

test('instrument names look like links', async ({ page }) => {
  await signInDemo(page, 'olga');
  await page.goto(`${DEMO}/instruments`);
  const name = page
    .getByRole('row')
    .filter({ hasText: 'FTIR 1' })
    .getByText(/^FTIR 1/);
  const style = await name.evaluate((el) => {
    const s = getComputedStyle(el);
    return { line: s.textDecorationLine, colour: s.color };
  });
  expect(style.line).toContain('underline');
  expect(style.colour).toBe('rgb(15, 94, 110)'); // petrol
});

test('after "verified, certificate issued" the certificate is one click away', async ({ page }) => {
  test.setTimeout(120_000);
  await signInDemo(page, 'victor');
  await openMainPage(
    page,
    MAIN_PAGES.find((m) => m.name === 'verifier review')!,
  );
  await page.getByRole('button', { name: 'Sign as verified' }).click();
  const dialog = page.getByRole('dialog');
  const user = dialog.getByLabel('User name');
  if (await user.count()) await user.fill('victor');
  await dialog.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await dialog.getByRole('button', { name: 'Sign as verified' }).click();
  const status = page.getByRole('status').filter({ hasText: 'passed identity' });
  await expect(status).toBeVisible({ timeout: 30_000 });
  const link = status.getByRole('link', { name: /^Open certificate IC-\d{4}-\d{5}$/ });
  await expect(link).toBeVisible({ timeout: 20_000 });
  await link.click();
  await expect(page.getByRole('heading', { level: 1, name: /^Identity certificate IC-/ })).toBeVisible();
});
