/**
 * Issue 11 item 2, client side: a QA manager tries to approve a loosened identity method version (a
 * correlation coefficient limit of 0.01, band concordance off) and is refused with the reason: under
 * that version another approved material would pass. Irene (QA) writes the version; Quinn (QA, not
 * the author) tries to approve it. The e2e library (scripts/e2e-seed-library.ts) holds nylon 6,6 and
 * PET fibre grades with real spectra from ../shared/reference-data/atr-ftir-fibres (FasTEX-KCL, MIT).
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

test('QA tries to approve a loosened method version and is refused with the reason', async ({ page, baseURL }) => {
  test.setTimeout(120_000);
  await signIn(page, 'irene');
  const headers = { Origin: new URL(baseURL!).origin };
  const materials = (await (await page.request.get('/api/materials')).json()) as {
    id: number;
    code: string;
    approvedMethod: { id: number } | null;
    draftMethodId: number | null;
  }[];
  const pet = materials.find((m) => m.code === 'E2E-PET')!;
  expect(pet.approvedMethod).not.toBeNull();
  const current = await (await page.request.get(`/api/methods/${pet.approvedMethod!.id}`)).json();
  const p = current.params;
  const loosened = {
    ...p,
    thresholds: { ...p.thresholds, minCorrelation: 0.01, minDerivativeCorrelation: null },
    peakProminence: null,
    maxExtraBandProminence: null,
    relativeIntensityTolerance: null,
  };
  const draft = pet.draftMethodId
    ? await page.request.patch(`/api/methods/${pet.draftMethodId}`, {
        headers,
        data: { params: loosened, reason: 'loosened for the browser test' },
      })
    : await page.request.post(`/api/methods/${pet.approvedMethod!.id}/new-version`, {
        headers,
        data: { params: loosened, changeNote: 'Loosened: correlation coefficient (r) at least 0.01, bands off.' },
      });
  expect(draft.ok(), await draft.text()).toBe(true);
  const version = ((await draft.json()) as { version: number }).version;
  await page.getByRole('button', { name: 'Sign out' }).click();

  await signIn(page, 'quinn');
  await page.goto(`/library/materials/${pet.id}`);
  const card = page.getByTestId(`method-v${version}`);
  await expect(card).toContainText('Draft');
  await card.getByRole('button', { name: 'Approve method version' }).click();
  const dialog = page.getByRole('dialog');
  const user = dialog.getByLabel('User name');
  if (await user.isVisible()) await user.fill('quinn');
  await dialog.getByLabel('Password', { exact: true }).fill(DEMO_PASSWORD);
  await dialog.getByRole('button', { name: 'Approve method version' }).click();
  const alert = dialog.getByRole('alert');
  await expect(alert).toContainText(`Approval refused: under version ${version}`);
  await expect(alert).toContainText(/E2E-NY66 \(reference [^)]+\) as a sample under this version would pass/);
  await expect(alert).toContainText('against a limit of 0.01');
  await dialog.getByRole('button', { name: 'Cancel' }).click();
  await expect(card).toContainText('Draft');
});
