/**
 * Issue 18, item 8: axe-core (through @axe-core/playwright) checks every main page of the demo site
 * against the WCAG 2.1 A and AA rules; no serious or critical violation may remain. Beside the
 * automatic rules: one main landmark, headings without skipped levels, and every scrollable
 * region reachable by keyboard (docs/accessibility.md).
 */
import AxeBuilder from '@axe-core/playwright';
import { expect, test, type Page } from '@playwright/test';
import { MAIN_PAGES, openMainPage, signInDemo } from './main-pages';

const WCAG_21_AA = ['wcag2a', 'wcag2aa', 'wcag21a', 'wcag21aa'];

async function seriousViolations(page: Page): Promise<string[]> {
  const result = await new AxeBuilder({ page }).withTags(WCAG_21_AA).analyze();
  return result.violations
    .filter((v) => v.impact === 'serious' || v.impact === 'critical')
    .map(
      (v) =>
        `${v.id} (${v.impact}): ${v.help}\n` +
        v.nodes
          .slice(0, 5)
          .map((n) => `    ${n.target.join(' ')}: ${n.failureSummary?.split('\n').slice(1).join(' ') ?? ''}`)
          .join('\n'),
    );
}

/** Heading levels in document order, each as h1..h6 or role=heading with aria-level. */
async function headingLevels(page: Page): Promise<number[]> {
  return page.evaluate(() =>
    Array.from(document.querySelectorAll('h1, h2, h3, h4, h5, h6, [role="heading"]'))
      .filter((h) => !(h as HTMLElement).closest('[hidden], [aria-hidden="true"]'))
      .map((h) => Number(h.getAttribute('aria-level') ?? h.tagName.slice(1))),
  );
}

/** Elements that scroll (content wider or taller than the box) but cannot take keyboard focus. */
async function unreachableScrollers(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const out: string[] = [];
    for (const el of Array.from(document.querySelectorAll<HTMLElement>('body *'))) {
      const s = getComputedStyle(el);
      const scrollsX = /(auto|scroll)/.test(s.overflowX) && el.scrollWidth > el.clientWidth + 1;
      const scrollsY = /(auto|scroll)/.test(s.overflowY) && el.scrollHeight > el.clientHeight + 1;
      if (!scrollsX && !scrollsY) continue;
      if (el === document.scrollingElement || el === document.body) continue;
      const focusable = el.tabIndex >= 0 || el.querySelector('a[href], button, input, select, textarea, [tabindex]');
      if (!focusable)
        out.push(`${el.tagName.toLowerCase()}.${el.className.toString().split(' ').slice(0, 3).join('.')}`);
    }
    return out;
  });
}

for (const p of MAIN_PAGES) {
  test(`accessibility of ${p.name} (${p.user || 'signed out'})`, async ({ page }) => {
    await page.setViewportSize({ width: 1280, height: 800 });
    if (p.user) await signInDemo(page, p.user);
    const path = await openMainPage(page, p);

    expect(await seriousViolations(page), `axe on ${path}`).toEqual([]);

    await expect(page.getByRole('main')).toHaveCount(1);
    const levels = await headingLevels(page);
    expect(levels[0], `first heading on ${path}`).toBe(1);
    expect(
      levels.filter((l) => l === 1),
      `one h1 on ${path}`,
    ).toHaveLength(1);
    for (let i = 1; i < levels.length; i++)
      expect(levels[i] - levels[i - 1], `heading levels ${levels.join(',')} on ${path}`).toBeLessThanOrEqual(1);

    expect(await unreachableScrollers(page), `scrollable regions without keyboard access on ${path}`).toEqual([]);
  });
}

test('the specificity matrix, wider than the page at 1280 px, is a named region reached and scrolled by keyboard', async ({
  page,
}) => {
  await page.setViewportSize({ width: 1280, height: 800 });
  await signInDemo(page, 'quinn');
  await openMainPage(
    page,
    MAIN_PAGES.find((m) => m.name === 'library')!,
  );
  const scroller = page.getByRole('table', { name: 'Specificity matrix' }).locator('xpath=..');
  await expect(scroller).toHaveAttribute('role', 'region');
  await expect(scroller).toHaveAttribute('tabindex', '0');
  await expect(scroller).toHaveAttribute('aria-label', 'Specificity matrix');
  expect(await scroller.evaluate((el) => el.scrollWidth > el.clientWidth)).toBe(true);
  await expect(page.getByTestId('scroll-hint').first()).toBeVisible();
  // Reached with the Tab key (not only by a script's focus()), then scrolled with the arrow keys.
  await page.getByRole('table', { name: 'Specificity matrix' }).scrollIntoViewIfNeeded();
  await page.keyboard.press('Tab');
  for (let i = 0; i < 80 && !(await scroller.evaluate((el) => el === document.activeElement)); i++)
    await page.keyboard.press('Tab');
  await expect(scroller).toBeFocused();
  await page.keyboard.press('ArrowRight');
  await page.keyboard.press('ArrowRight');
  await expect.poll(() => scroller.evaluate((el) => el.scrollLeft)).toBeGreaterThan(0);
});
