/**
 * Issue 18, item 5: sessions and tabs. Tabs of one browser share the session cookie: a sign-in as
 * someone else in one tab makes the other say so and reload as that person; a sign-out elsewhere
 * is not reported as idle expiry; a warning comes two minutes before the idle sign-out with "Stay
 * signed in"; a long investigation note survives a reload as the user's local draft and is gone
 * after sign-out. Runs against the demo site (scripts/e2e-demo-server.sh).
 */
import { expect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD } from '../db/seeds/accounts';

const DEMO = `http://127.0.0.1:${Number(process.env.E2E_DEMO_PORT)}`;

async function signIn(page: Page, username: string) {
  await page.goto(`${DEMO}/sign-in`);
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('heading', { name: /^Work queue of/ })).toBeVisible();
}

test('another tab signing in as someone else: this tab says so and reloads as that user', async ({ context }) => {
  // The second tab shows the sign-in page from before (a signed-in browser is sent past it).
  const second = await context.newPage();
  await second.goto(`${DEMO}/sign-in`);
  await expect(second.getByLabel('User name')).toBeVisible();
  const first = await context.newPage();
  await signIn(first, 'quinn');
  await expect(first.getByTestId('user-name')).toHaveText('Quinn Okafor');
  await second.getByLabel('User name').fill('aurelia');
  await second.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await second.getByRole('button', { name: 'Sign in' }).click();
  await expect(second.getByRole('heading', { name: /^Work queue of/ })).toBeVisible();
  await expect(first.getByTestId('session-notice')).toContainText(
    'Another tab of this browser signed in as Aurelia Santos (aurelia)',
  );
  await expect(first.getByTestId('user-name')).toHaveText('Aurelia Santos');
});

test('a sign-out in another tab is reported as such, never as idle expiry', async ({ context }) => {
  const first = await context.newPage();
  await signIn(first, 'quinn');
  const second = await context.newPage();
  await second.goto(`${DEMO}/`);
  await expect(second.getByTestId('user-name')).toHaveText('Quinn Okafor');
  await second.getByRole('button', { name: 'Sign out' }).click();
  await expect(second.getByText('You have signed out.')).toBeVisible();
  await expect(first).toHaveURL(/\/sign-in/);
  await expect(first.getByText('You signed out in another tab of this browser.')).toBeVisible();
  await expect(first.getByText(/without activity/)).toHaveCount(0);

  // Ended behind the tab's back (no message from another tab): the next request says the session
  // ended, not that it expired after minutes without activity.
  await signIn(first, 'quinn');
  const out = await first.request.post(`${DEMO}/api/auth/sign-out`, { headers: { Origin: DEMO } });
  expect(out.ok()).toBe(true);
  // a page whose data this tab has not loaded yet, so the click asks the server
  await first.getByRole('navigation', { name: 'Main' }).getByRole('link', { name: 'Audit trail' }).click();
  await expect(first).toHaveURL(/\/sign-in/);
  await expect(first.getByText(/you signed out in another tab or window/)).toBeVisible();
  await expect(first.getByText(/without activity/)).toHaveCount(0);
});

test('two minutes before the idle sign-out a warning offers "Stay signed in"', async ({ page }) => {
  await page.clock.install();
  await signIn(page, 'quinn');
  const idleMinutes = (await (await page.request.get(`${DEMO}/api/auth/me`)).json()).site.idleMinutes as number;
  await expect(page.getByTestId('idle-warning')).toHaveCount(0);
  // just under the two minutes before the end: no warning yet
  await page.clock.fastForward((idleMinutes - 2) * 60_000 - 10_000);
  await expect(page.getByTestId('idle-warning')).toHaveCount(0);
  await page.clock.fastForward(20_000);
  const warning = page.getByRole('alertdialog', { name: 'You will be signed out soon' });
  await expect(warning).toBeVisible();
  await expect(warning).toContainText(/signs you out in 1:\d\d/);
  await warning.getByRole('button', { name: 'Stay signed in' }).click();
  await expect(warning).toBeHidden();
  await expect(page.getByTestId('user-name')).toHaveText('Quinn Okafor');
});

test("a long investigation note is kept as the user's draft across a reload and cleared at sign-out", async ({
  page,
}) => {
  await signIn(page, 'quinn');
  const list = (await (await page.request.get(`${DEMO}/api/investigations`)).json()) as {
    id: number;
    status: string;
  }[];
  const open = list.find((i) => i.status === 'open')!;
  await page.goto(`${DEMO}/investigations/${open.id}`);
  const note = 'Balance and ATR crystal checked; the operator re-cleaned the crystal before container 3 …';
  await page.getByLabel('Summary', { exact: true }).fill(note);
  await page.reload();
  await expect(page.getByLabel('Summary', { exact: true })).toHaveValue(note);
  await page.getByRole('button', { name: 'Sign out' }).click();
  await expect(page.getByText('You have signed out.')).toBeVisible();
  expect(await page.evaluate(() => Object.keys(localStorage).filter((k) => k.startsWith('drumline.draft.')))).toEqual(
    [],
  );
  await signIn(page, 'quinn');
  await page.goto(`${DEMO}/investigations/${open.id}`);
  await expect(page.getByLabel('Summary', { exact: true })).toHaveValue('');
});
