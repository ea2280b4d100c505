/**
 * Issue 16 in the browser: QA sees the drift signal of the synthetic trend history
 * (scripts/e2e-seed-trend.ts: one source drifting, run rules applied) in the work queue, opens it,
 * sees the control chart with the run-rule points marked and listed, and acknowledges the signal
 * with a comment; the signal then shows as acknowledged. QA opens an investigation of another drift
 * signal with an e-signature; the investigation names the measurements and the signal links to it.
 */
import { expect, test, type Page } from '@playwright/test';
import { DEMO_PASSWORD } from '../db/seeds/accounts';

async function signIn(page: Page, username: string) {
  await page.goto('/sign-in');
  await page.getByLabel('User name').fill(username);
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('heading', { name: /^Work queue of/ })).toBeVisible();
}

test('QA sees the drift signal, opens its chart and acknowledges it', async ({ page }) => {
  await signIn(page, 'quinn');
  const row = page
    .getByTestId('trend-signal')
    .filter({ hasText: 'Nylon 6,6 trend fibre' })
    .filter({ hasText: 'Source Pellham Yarns (invented)' })
    .first();
  await expect(row).toBeVisible();
  await expect(row).toContainText('open: early warning');
  await row.getByRole('link', { name: /^Signal \d+$/ }).click();

  await expect(page.getByRole('heading', { name: /^Trend signal \d+: Nylon 6,6 trend fibre$/ })).toBeVisible();
  await expect(page.getByText('early warning, not a failure').first()).toBeVisible();
  const chart = page.getByTestId('control-chart');
  await expect(chart.locator('canvas')).toHaveCount(2);
  await expect(page.getByTestId('rule-hits')).toBeVisible();
  await expect(page.getByTestId('rule-hits').locator('tbody tr').first()).toBeVisible();
  await expect(page.getByRole('link', { name: 'Download CSV' })).toHaveAttribute('href', /chart\.csv\?/);

  // zoom by dragging across the individuals chart, then back with a double-click
  const over = chart.locator('.u-over').first();
  const box = (await over.boundingBox())!;
  await page.mouse.move(box.x + box.width * 0.5, box.y + box.height / 2);
  await page.mouse.down();
  await page.mouse.move(box.x + box.width * 0.9, box.y + box.height / 2, { steps: 5 });
  await page.mouse.up();
  await over.dblclick();

  await page.getByLabel('What you found and what follows').fill('short');
  await page.getByRole('button', { name: 'Acknowledge signal' }).click();
  await expect(page.getByText('at least 10 characters')).toBeVisible();
  await page
    .getByLabel('What you found and what follows')
    .fill('Supplier asked about a change of spinning oil; next three deliveries sampled from every drum.');
  await page.getByRole('button', { name: 'Acknowledge signal' }).click();
  await expect(page.getByText(/^✓ Acknowledged:/)).toBeVisible();
  await expect(page.getByText('Supplier asked about a change of spinning oil', { exact: false })).toBeVisible();
  await expect(page.getByRole('button', { name: 'Acknowledge signal' })).toHaveCount(0);
});

test('QA opens an investigation from a drift signal: signed, it names the measurements and the signal links to it', async ({
  page,
}) => {
  await signIn(page, 'quinn');
  const rows = page
    .getByTestId('trend-signal')
    .filter({ hasText: 'Nylon 6,6 trend fibre' })
    .filter({ hasText: 'Source Pellham Yarns (invented)' })
    .filter({ hasText: 'open: early warning' });
  // the last open one: the first is acknowledged by the test above
  const row = rows.last();
  await expect(row).toBeVisible();
  await row.getByRole('link', { name: /^Signal \d+$/ }).click();
  await expect(page.getByRole('heading', { name: /^Trend signal \d+: Nylon 6,6 trend fibre$/ })).toBeVisible();

  await page.getByRole('button', { name: 'Open an investigation' }).click();
  const dialog = page.getByRole('dialog', { name: 'Open an investigation of this trend signal' });
  await dialog.getByLabel('User name').fill('quinn');
  await dialog.getByLabel('Password').fill(DEMO_PASSWORD);
  await dialog.getByLabel('Why the signal needs an investigation').fill('short');
  await dialog.getByRole('button', { name: 'Open the investigation' }).click();
  await expect(dialog.getByText('at least 10 characters')).toBeVisible();
  await dialog
    .getByLabel('Why the signal needs an investigation')
    .fill('Band shift of Pellham Yarns keeps rising over five deliveries; find the cause before a drum fails.');
  // a refused attempt clears the password: type it again
  await dialog.getByLabel('Password').fill(DEMO_PASSWORD);
  await dialog.getByRole('button', { name: 'Open the investigation' }).click();

  await expect(page.getByRole('heading', { name: /^INV-\d{4}-\d{4}/ })).toBeVisible();
  await expect(page.getByRole('heading', { name: 'Trend signal under investigation' })).toBeVisible();
  await expect(page.getByTestId('trend-measurements').locator('tbody tr').first()).toContainText('Pellham Yarns');
  await expect(page.getByText('Investigation of a trend signal opened')).toBeVisible();
  await expect(page.getByRole('heading', { name: 'Phase I laboratory check', exact: true })).toBeVisible();
  // no way to invalidate a result or reject a lot from here
  await expect(page.getByRole('button', { name: /reject the lot/i })).toHaveCount(0);

  await page.getByRole('link', { name: /^Signal \d+$/ }).click();
  await expect(page.getByText(/^✓ Under investigation/)).toBeVisible();
  await expect(page.getByTestId('signal-investigation')).toContainText(/INV-\d{4}-\d{4}/);
  await expect(page.getByRole('button', { name: 'Open an investigation' })).toHaveCount(0);
});

test('in the demo site, QA finds the paracetamol drift signal, its chart, the recorded audit-trail review and the QA overview', async ({
  page,
}) => {
  const demo = `http://127.0.0.1:${Number(process.env.E2E_DEMO_PORT)}`;
  await page.goto(`${demo}/sign-in`);
  await page.getByLabel('User name').fill('quinn');
  await page.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await page.getByRole('button', { name: 'Sign in' }).click();
  await expect(page.getByRole('heading', { name: /^Work queue of/ })).toBeVisible();
  const row = page
    .getByTestId('trend-signal')
    .filter({ hasText: 'Paracetamol' })
    .filter({ hasText: 'Source Brannock Pharma Materials (synthetic history)' })
    .first();
  await expect(row).toBeVisible();
  await row.getByRole('link', { name: /^Signal \d+$/ }).click();
  await expect(page.getByRole('heading', { name: /^Trend signal \d+: Paracetamol$/ })).toBeVisible();
  await expect(page.getByTestId('control-chart').locator('canvas')).toHaveCount(2);
  await expect(page.getByTestId('rule-hits')).toBeVisible();

  await page.goto(`${demo}/audit-reviews`);
  await expect(page.getByTestId('audit-review').first()).toContainText(/ATR-\d{4}-\d{3}/);
  await expect(page.getByTestId('audit-review').first()).toContainText('audit trail reviewed');

  await page.goto(`${demo}/qa-overview`);
  await expect(page.getByRole('heading', { name: 'First-pass rate per source' })).toBeVisible();
  await expect(page.getByText('Brannock Pharma Materials (synthetic history)').first()).toBeVisible();
});
