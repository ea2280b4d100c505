/**
 * Issue 2, client side: an administrator creates an account; the new person signs in with the
 * temporary password, is held on the password-change page until they choose their own, and then
 * reaches the home page. The server behind this is the real one on a fresh MariaDB database.
 */
import { expect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD } from '../db/seeds/accounts';

async function signIn(page: Page, username: string, password: string) {
  await page.goto('/sign-in');
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(password);
  await page.getByRole('button', { name: 'Sign in' }).click();
}

async function signOut(page: Page) {
  await page.getByRole('button', { name: 'Sign out' }).click();
  await expect(page).toHaveURL(/\/sign-in$/);
  await expect(page.getByText('You have signed out.')).toBeVisible();
}

test('an admin creates an account; the new user must change the temporary password, then reaches the home page', async ({
  page,
}) => {
  const username = `e2e.${Date.now().toString(36)}`;
  const fullName = 'Rosa Trägårdh';
  const temporary = 'Temporary-Pass-4711';
  const chosen = 'My-own-passphrase-2026';

  // The administrator signs in and sees the admin navigation and their own name and role.
  await signIn(page, 'adam', DEMO_PASSWORD);
  await expect(page.getByRole('heading', { name: 'Work queue of Adam Lindqvist' })).toBeVisible();
  await expect(page.getByTestId('user-roles')).toContainText('Administrator');
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'User accounts' }).click();
  await expect(page).toHaveURL(/\/admin\/users$/);
  await expect(page.getByRole('table', { name: 'User accounts' })).toContainText('olga');

  // Create the account. A too-short password is refused in words before anything is sent.
  await page.getByRole('button', { name: 'Create account' }).click();
  let form = page.getByRole('form', { name: 'New account' });
  await form.getByLabel('User name').fill(username);
  await form.getByLabel('Full name').fill(fullName);
  await form.getByLabel('E-mail').fill(`${username}@lindenhall.example`);
  await form.getByLabel('Temporary password').fill('short');
  await form.getByLabel(/^Operator/).check();
  await form.getByRole('button', { name: 'Create account' }).click();
  await expect(form.getByText('The password must have at least 12 characters.')).toBeVisible();
  await form.getByLabel('Temporary password').fill(temporary);
  await form.getByRole('button', { name: 'Create account' }).click();
  await expect(page.getByTestId('notice')).toContainText(`The account ${username} was created.`);
  const row = page.getByRole('row').filter({ hasText: username });
  await expect(row).toContainText(fullName);
  await expect(row).toContainText('Operator');
  await expect(row).toContainText('Must change password');

  // The server enforces uniqueness: the same user name again is refused with its sentence.
  await page.getByRole('button', { name: 'Create account' }).click();
  form = page.getByRole('form', { name: 'New account' });
  await form.getByLabel('User name').fill(username);
  await form.getByLabel('Full name').fill('Somebody Else');
  await form.getByLabel('E-mail').fill(`other.${username}@lindenhall.example`);
  await form.getByLabel('Temporary password').fill(temporary);
  await form.getByLabel(/^Verifier/).check();
  await form.getByRole('button', { name: 'Create account' }).click();
  await expect(
    form.getByRole('alert').filter({ hasText: `The user name "${username}" is already taken.` }),
  ).toBeVisible();
  await form.getByRole('button', { name: 'Cancel' }).click();

  await signOut(page);

  // The new person signs in with the temporary password and is held on the password page.
  await signIn(page, username, temporary);
  await expect(page).toHaveURL(/\/account\/password$/);
  await expect(page.getByRole('heading', { name: 'Choose your own password' })).toBeVisible();
  await expect(page.getByRole('navigation', { name: 'Main' })).toHaveCount(0);
  // Other pages redirect back here until the password is changed.
  await page.goto('/');
  await expect(page).toHaveURL(/\/account\/password$/);

  await page.getByLabel('Temporary password').fill(temporary);
  await page.getByLabel('New password', { exact: true }).fill(chosen);
  await page.getByLabel('New password again').fill(chosen);
  await page.getByRole('button', { name: 'Change password' }).click();

  await expect(page).toHaveURL(/\/$/);
  await expect(page.getByRole('heading', { name: `Work queue of ${fullName}` })).toBeVisible();
  await expect(page.getByText('Your password was changed.')).toBeVisible();
  await expect(page.getByTestId('user-name')).toHaveText(fullName);
  await expect(page.getByTestId('user-roles')).toContainText('Operator');
  // An operator is not offered the administration pages.
  await expect(page.getByRole('link', { name: 'User accounts' })).toHaveCount(0);

  // The temporary password no longer opens the account; the chosen one does.
  await signOut(page);
  await signIn(page, username, temporary);
  await expect(page.getByRole('alert')).toBeVisible();
  await expect(page).toHaveURL(/\/sign-in$/);
  await signIn(page, username, chosen);
  await expect(page.getByRole('heading', { name: `Work queue of ${fullName}` })).toBeVisible();
});

test('an operator who opens the admin page is told in words that the page is not open to their roles', async ({
  page,
}) => {
  await signIn(page, 'olga', DEMO_PASSWORD);
  await expect(page.getByRole('heading', { name: 'Work queue of Olga Brandt' })).toBeVisible();
  await page.goto('/admin/users');
  await expect(page.getByRole('heading', { name: 'This page is not open to your roles' })).toBeVisible();
  await expect(page.getByRole('table')).toHaveCount(0);
});

test('when the server no longer knows the session, the next action leads to the sign-in page with the reason, and back', async ({
  page,
  context,
}) => {
  await signIn(page, 'adam', DEMO_PASSWORD);
  await expect(page.getByRole('heading', { name: 'Work queue of Adam Lindqvist' })).toBeVisible();
  // The session cookie disappears while the tab is in use (the server ended the session: a sign-out
  // elsewhere or an administrator). The tab was not idle, so the reason says so (idle expiry has
  // its own message, e2e/sessions.spec.ts).
  await context.clearCookies();
  // A page whose data the work queue has not already loaded, so the next request meets the server.
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Audit trail' }).click();
  await expect(page).toHaveURL(/\/sign-in$/);
  await expect(page.getByRole('status')).toHaveText(
    /^Your session has ended: you signed out in another tab or window, or an administrator ended it\./,
  );
  // Signing in again returns to the page that was asked for.
  await page.getByLabel('User name').fill('adam');
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page).toHaveURL(/\/audit/);
  await expect(page.getByRole('heading', { name: 'Audit trail', level: 1 })).toBeVisible();
});

test('a verifier grant waits for a second administrator: Adam asks, Sigrid confirms with her e-signature', async ({
  page,
  browser,
}) => {
  const username = `e2e.two.${Date.now().toString(36)}`;
  await signIn(page, 'adam', DEMO_PASSWORD);
  await page.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'User accounts' }).click();

  // Adam's own account offers no role change (nobody changes their own roles).
  await page.getByRole('row').filter({ hasText: 'Adam Lindqvist' }).click();
  await expect(page.getByRole('button', { name: 'Edit name, e-mail', exact: true })).toBeVisible();
  await expect(page.getByRole('button', { name: 'Deactivate' })).toBeDisabled();

  // Administrator together with another role is refused in words before anything is sent.
  await page.getByRole('button', { name: 'Create account' }).click();
  const form = page.getByRole('form', { name: 'New account' });
  await form.getByLabel('User name').fill(username);
  await form.getByLabel('Full name').fill('Mireille Okonjo');
  await form.getByLabel('E-mail').fill(`${username}@lindenhall.example`);
  await form.getByLabel('Temporary password').fill('Temporary-Pass-4711');
  await form.getByLabel(/^Operator/).check();
  await form.getByLabel(/^Administrator/).check();
  await form.getByRole('button', { name: 'Create account' }).click();
  await expect(form.getByText('The administrator role cannot be combined with another role')).toBeVisible();
  await form.getByLabel(/^Administrator/).uncheck();
  await form.getByLabel(/^Verifier/).check();
  await form.getByRole('button', { name: 'Create account' }).click();
  await expect(page.getByTestId('notice')).toContainText("await a second administrator's confirmation");
  const row = page.getByRole('row').filter({ hasText: username });
  await expect(row).toContainText('Operator (to confirm: Operator, Verifier)');
  await row.click();
  const pending = page.getByRole('region', { name: 'Role change awaiting confirmation' });
  await expect(pending).toContainText('Asked by Adam Lindqvist');
  await expect(pending.getByRole('button', { name: 'Confirm role change' })).toHaveCount(0); // not by the requester
  await expect(pending.getByRole('button', { name: 'Withdraw request' })).toBeVisible();

  // Sigrid, the second administrator, finds it in her work queue and confirms it with her signature.
  const ctx = await browser.newContext();
  const s = await ctx.newPage();
  await signIn(s, 'sigrid', DEMO_PASSWORD);
  await expect(
    s
      .getByRole('main')
      .getByText(/asked by Adam Lindqvist awaits your confirmation/)
      .first(),
  ).toBeVisible();
  await s.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'User accounts' }).click();
  await s.getByRole('row').filter({ hasText: username }).click();
  await s
    .getByRole('region', { name: 'Role change awaiting confirmation' })
    .getByRole('button', { name: 'Confirm role change' })
    .click();
  const dialog = s.getByRole('dialog', { name: `Confirm the role change of ${username}` });
  await expect(dialog.getByTestId('signer-name')).toHaveText('Sigrid Achterberg');
  await dialog.getByLabel('User name').fill('sigrid');
  await dialog.getByLabel('Password').fill(DEMO_PASSWORD);
  await dialog.getByRole('button', { name: 'Confirm role change' }).click();
  await expect(s.getByTestId('notice')).toContainText(`The roles of ${username} are now Operator, Verifier.`);
  await expect(s.getByRole('row').filter({ hasText: username })).toContainText('Operator, Verifier');
  await expect(s.getByRole('region', { name: 'Role change awaiting confirmation' })).toHaveCount(0);
  await ctx.close();
});
