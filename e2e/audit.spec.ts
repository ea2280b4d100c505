/**
 * Issue 7 in the browser: the auditor reads the trail (times named in the site zone), filters it,
 * opens an event with its values before and after side by side, runs the chain check and exports
 * the filtered trail; the administrator sees an account's history from the accounts page and only
 * account events in the trail. Real server, fresh database.
 */
import { expect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD } from '../db/seeds/accounts';

async function signIn(page: Page, username: string) {
  await page.goto('/sign-in');
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('navigation', { name: 'Main' })).toBeVisible();
}

test('an administrator changes roles; the account history and the auditor trail show who, when, why, before and after', async ({
  page,
  browser,
}) => {
  // The administrator makes a change with a reason (through the API, with the page's session).
  await signIn(page, 'adam');
  const username = `e2e.audit.${Date.now().toString(36)}`;
  const created = await page.request.post('/api/users', {
    data: {
      username,
      fullName: 'Jonas Ekwueme',
      email: `${username}@lindenhall.example`,
      roles: ['operator'],
      temporaryPassword: 'Temporary-Pass-4711',
    },
  });
  expect(created.status()).toBe(201);
  const id = (await created.json()).id as number;
  const changed = await page.request.patch(`/api/users/${id}`, {
    data: { roles: ['operator', 'verifier'], reason: 'trained as second person, training record TR-118' },
  });
  expect(changed.status()).toBe(200);

  // Account history from the accounts page. The work queue already loaded the account list (kept
  // 15 s) before the two API calls above, which the page's hooks did not see: load the app afresh.
  await page.reload();
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'User accounts' }).click();
  await page.getByRole('row').filter({ hasText: username }).click();
  await page.getByRole('button', { name: 'Account history' }).click();
  const history = page.getByRole('dialog', { name: `History of the account ${username}` });
  await expect(history).toBeVisible();
  const events = history.getByTestId('history-event');
  await expect(events).toHaveCount(2);
  await expect(events.nth(0)).toContainText('user.created');
  await expect(events.nth(1)).toContainText('user.roles-changed');
  await expect(events.nth(1)).toContainText('trained as second person, training record TR-118');
  await expect(events.nth(1)).toContainText('roles: ["operator"] → ["operator","verifier"]');
  await history.getByRole('button', { name: 'Close' }).click();

  // The administrator's trail holds account events only.
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Audit trail' }).click();
  await expect(page.getByRole('note')).toContainText('you see the account and sign-in events');
  for (const cell of await page.getByTestId('audit-row').locator('td:nth-child(5)').allTextContents())
    expect(cell).toMatch(/^Account/);

  // The auditor, in a separate session.
  const ctx = await browser.newContext();
  const a = await ctx.newPage();
  await signIn(a, 'aurelia');
  await a.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Audit trail' }).click();
  await expect(a).toHaveURL(/\/audit$/);
  await expect(a.getByRole('columnheader', { name: /Time \(Europe\/Berlin\)/ })).toBeVisible();
  await expect(a.getByText(/site time zone Europe\/Berlin/)).toBeVisible();

  // Filter: this account's record, oldest first.
  await a.getByLabel('Record type').selectOption('user');
  await a.getByLabel('Record id').fill(String(id));
  await a.getByRole('button', { name: 'Apply filter' }).click();
  await expect(a.getByTestId('result-summary')).toContainText('Showing 1–2 of 2');
  await a.getByRole('button', { name: /^Time/ }).click(); // oldest first
  await expect(a).toHaveURL(/sort=asc/);
  const rows = a.getByTestId('audit-row');
  await expect(rows.nth(0)).toContainText('user.created');
  await expect(rows.nth(1)).toContainText('user.roles-changed');

  // The event's values side by side.
  await rows.nth(1).click();
  const detail = a.getByRole('dialog', { name: /Audit event \d+/ });
  await expect(detail).toContainText('Adam Lindqvist');
  await expect(detail).toContainText('trained as second person, training record TR-118');
  const rolesRow = detail.getByRole('row').filter({ hasText: 'changed' });
  await expect(rolesRow.getByRole('rowheader')).toContainText('roles');
  await expect(rolesRow.getByRole('cell').nth(0)).toHaveText('["operator"]');
  await expect(rolesRow.getByRole('cell').nth(1)).toHaveText('["operator","verifier"]');
  await detail.getByRole('button', { name: 'Close' }).click();
  await expect(detail).toBeHidden();

  // Text in the reason.
  await a.getByLabel('Reason contains').fill('TR-118');
  await a.getByRole('button', { name: 'Apply filter' }).click();
  await expect(rows).toHaveCount(1);
  await expect(a.getByTestId('result-summary')).toContainText('text search finished');

  // Export of the filtered trail (CSV) - it carries the filter and the event.
  const [download] = await Promise.all([a.waitForEvent('download'), a.getByTestId('export-csv').click()]);
  const csv = await (await import('node:fs')).promises.readFile((await download.path())!, 'utf8');
  expect(csv).toContain('reason contains ""TR-118""');
  expect(csv).toContain('user.roles-changed');

  // Chain check.
  await a.getByRole('button', { name: 'Check the chain' }).click();
  const chain = a.getByTestId('chain-check');
  await expect(chain).toContainText('Intact');
  await expect(chain).toContainText(/each linked to the one before/);
  await expect(chain.locator('.font-mono')).toHaveText(/^[0-9a-f]{64}$/);
  await ctx.close();
});
