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

test('an administrator changes roles, a second one confirms; the account history and the auditor trail show who, when, why, before and after', async ({
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
  // Verifier is granted when a second administrator confirms it with her signature (two-person rule).
  const requestId = (await changed.json()).pendingRoleChange.requestId as number;
  const second = await browser.newContext();
  const sp = await second.newPage();
  await signIn(sp, 'sigrid');
  const confirmed = await sp.request.post(`/api/users/role-changes/${requestId}/confirm`, {
    data: { signature: { username: 'sigrid', password: DEMO_PASSWORD } },
  });
  expect(confirmed.status()).toBe(200);
  await second.close();

  // Account history from the accounts page. The work queue already loaded the account list (kept
  // 15 s) before the API calls above, which the page's hooks did not see: load the app afresh.
  await page.reload();
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'User accounts' }).click();
  await page.getByRole('row').filter({ hasText: username }).click();
  await page.getByRole('button', { name: 'Account history' }).click();
  const history = page.getByRole('dialog', { name: `History of the account ${username}` });
  await expect(history).toBeVisible();
  const events = history.getByTestId('history-event');
  await expect(events).toHaveCount(3);
  await expect(events.nth(0)).toContainText('Account created (user.created)');
  await expect(events.nth(1)).toContainText('user.role-change-requested');
  await expect(events.nth(2)).toContainText('user.roles-changed');
  await expect(events.nth(2)).toContainText('trained as second person, training record TR-118');
  await expect(events.nth(2)).toContainText('roles: ["operator"] → ["operator","verifier"]');
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
  await expect(a.getByTestId('result-summary')).toContainText('Showing 1–3 of 3');
  await a.getByRole('button', { name: /^Time/ }).click(); // oldest first
  await expect(a).toHaveURL(/sort=asc/);
  const rows = a.getByTestId('audit-row');
  await expect(rows.nth(0)).toContainText('user.created');
  await expect(rows.nth(1)).toContainText('user.role-change-requested');
  await expect(rows.nth(2)).toContainText('user.roles-changed');
  // Business numbers (issue 18, item 3): the record by its user name, never "Account <id>"; the event
  // type in words first with its code beside it; the actor with the user name.
  for (let i = 0; i < 3; i++) await expect(rows.nth(i).getByTestId('audit-record')).toHaveText(`Account ${username}`);
  await expect(rows.nth(0).getByTestId('audit-action')).toHaveText(/^Account created\s*user\.created$/);
  await expect(rows.nth(2).getByTestId('audit-action')).toHaveText(/^Roles changed\s*user\.roles-changed$/);
  await expect(rows.nth(0)).toContainText('adam');

  // The event's values side by side: asked by Adam, confirmed by Sigrid.
  await rows.nth(2).click();
  const detail = a.getByRole('dialog', { name: /Audit event \d+/ });
  await expect(detail).toContainText('Sigrid Achterberg');
  await expect(detail).toContainText('Adam Lindqvist');
  await expect(detail).toContainText('trained as second person, training record TR-118');
  await expect(detail).toContainText(`Account ${username}`);
  await expect(detail).toContainText('Roles changed (user.roles-changed)');
  await expect(detail).toContainText('user name sigrid');
  // field names in words ("requested by", "confirmed by"), not the stored keys alone
  await expect(detail.getByRole('rowheader').filter({ hasText: /^requested by/ })).toBeVisible();
  const rolesRow = detail.getByRole('row').filter({ hasText: 'changed' });
  await expect(rolesRow.getByRole('rowheader')).toContainText('roles');
  await expect(rolesRow.getByRole('cell').nth(0)).toHaveText('["operator"]');
  await expect(rolesRow.getByRole('cell').nth(1)).toHaveText('["operator","verifier"]');
  await detail.getByRole('button', { name: 'Close' }).click();
  await expect(detail).toBeHidden();

  // Text in the reason.
  await a.getByLabel('Reason contains').fill('TR-118');
  await a.getByRole('button', { name: 'Apply filter' }).click();
  await expect(rows).toHaveCount(2); // the request and the confirmed change both carry the reason
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
