/**
 * Sign-in and signature steps shared by the browser tests that run on the first Playwright web
 * server (demo accounts, db/seeds/accounts.ts). Not a test file: Playwright picks up *.spec.ts only.
 */
import { expect, type Browser, type Page } from '@playwright/test';
import { DEMO_PASSWORD } from '../db/seeds/accounts';

/** A new browser context signed in as a demo user, on their work queue. */
export async function signedIn(browser: Browser, username: string): Promise<Page> {
  const page = await (await browser.newContext()).newPage();
  await page.goto('/sign-in');
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('heading', { name: /^Work queue of/ })).toBeVisible();
  return page;
}

/** Fills the signature dialog; the first signature of a session asks the user name too. */
export async function sign(page: Page, username: string, confirm: string): Promise<void> {
  const dialog = page.getByRole('dialog');
  await expect(dialog).toBeVisible();
  const user = dialog.getByLabel('User name');
  if (await user.count()) await user.fill(username);
  await dialog.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await dialog.getByRole('button', { name: confirm }).click();
  await expect(dialog).toBeHidden({ timeout: 20_000 });
}
