/**
 * Issue 8: a newcomer signs in with each demo account and finds work waiting. Runs against the
 * second Playwright web server (scripts/e2e-demo-server.sh), whose database holds the full demo
 * site seeded by db/seeds/demo.ts (lots in every state, a draft reference, an open
 * investigation, an instrument with its check due).
 */
import { expect, test, type Page } from '@playwright/test';
import { DEMO_ACCOUNTS, DEMO_PASSWORD } from '../db/seeds/accounts';

const demoPort = Number(process.env.E2E_DEMO_PORT);
const DEMO = `http://127.0.0.1:${demoPort}`;

/** Text that must appear in the work queue of each demo account (from the demo scenario). */
const EXPECTED: Record<string, RegExp[]> = {
  olga: [/FTIR 3 - dispensary/],
  victor: [/Povidone/],
  dana: [/FTIR 3 - dispensary/, /Povidone/],
  quinn: [/REF-STA-MZ-0004/, /INV-\d{4}-\d+/],
  irene: [],
  aurelia: [/IC-\d{4}-\d+/, /approval refused by the specificity check/, /Failure confirmed by QA/],
  adam: [/Tomas Berg/, /Olga Brandt/],
  sigrid: [/Olga Brandt/],
};

async function signIn(page: Page, username: string) {
  await page.goto(`${DEMO}/sign-in`);
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('heading', { name: /^Work queue of/ })).toBeVisible();
}

for (const account of DEMO_ACCOUNTS) {
  test(`demo account ${account.username} (${account.roles.join(', ')}) finds a non-empty work queue`, async ({
    page,
  }) => {
    await signIn(page, account.username);
    const main = page.getByRole('main');
    await expect(main.getByText('Nothing awaits you.')).toHaveCount(0);
    // At least one piece of work: a list entry linking to the record to act on.
    await expect(main.getByRole('listitem').getByRole('link').first()).toBeVisible();
    for (const text of EXPECTED[account.username] ?? []) await expect(main.getByText(text).first()).toBeVisible();
  });
}
