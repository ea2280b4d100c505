/**
 * Issue 18, item 6: the spectrum plot shows Drumline's own readout (the wavenumber and each trace's
 * value at the pointer, small and muted, only while hovering) and a small key of the line styles,
 * not the plotting library's legend. Demo site (e2e/main-pages.ts), the failing spectrum on the investigation page.
 */
import { expect, test } from '@playwright/test';
import { MAIN_PAGES, openMainPage, signInDemo } from './main-pages';

test('the plot readout follows the pointer and the key names the line styles', async ({ page }) => {
  await page.setViewportSize({ width: 1280, height: 800 });
  await signInDemo(page, 'quinn');
  await openMainPage(
    page,
    MAIN_PAGES.find((m) => m.name === 'investigation')!,
  );
  const figure = page.locator('figure').first();
  await expect(figure.locator('canvas').first()).toBeVisible();
  await expect(page.locator('.u-legend')).toHaveCount(0);

  const key = figure.getByTestId('plot-key');
  await expect(key).toContainText('Sample − reference');
  await expect(key.locator('svg line[stroke-dasharray]')).toHaveCount(1); // the reference, dashed

  const readout = figure.getByTestId('plot-readout');
  await expect(readout).toHaveText('');
  const over = figure.locator('.u-over').first();
  await over.scrollIntoViewIfNeeded();
  const box = (await over.boundingBox())!;
  await page.mouse.move(box.x + box.width * 0.3, box.y + box.height / 2);
  await expect(readout).toHaveText(/^\d{3,4}\.\d cm⁻¹ · .+ -?\d\.\d{4} · .+ (-?\d\.\d{4}|—)/);
  const first = await readout.textContent();
  await page.mouse.move(box.x + box.width * 0.7, box.y + box.height / 2);
  await expect(readout).not.toHaveText(first!);
  await page.mouse.move(0, 0);
  await expect(readout).toHaveText('');
});
