/**
 * Issue 18, item 1: every main page works at 1280 x 800 and uses a 1920 x 1080 screen.
 * - Every table marks its key columns (data-key-column); each key column's header lies inside the
 *   viewport and inside the visible part of its scroll box, with the table scrolled to its start.
 * - The page itself never scrolls sideways.
 * - Nothing overlaps: no two pieces of text, controls or pictures in the main area cover each other
 *   (an element and what it contains excepted; clipped or hidden parts ignored).
 * - On a wide screen the table pages use the width (the page header spans the main area).
 * Runs on the demo site (e2e/main-pages.ts); docs/accessibility.md.
 */
import { expect, test, type Page } from '@playwright/test';
import { MAIN_PAGES, openMainPage, signInDemo } from './main-pages';

const SIZES = [
  { width: 1280, height: 800 },
  { width: 1920, height: 1080 },
];

interface KeyColumnProblem {
  table: string;
  column: string;
  left: number;
  right: number;
  limit: number;
}

/** Tables without a key column, and key columns outside the viewport or their scroll box. */
async function keyColumnProblems(page: Page): Promise<{ unmarked: string[]; outside: KeyColumnProblem[] }> {
  return page.evaluate(() => {
    const unmarked: string[] = [];
    const outside: KeyColumnProblem[] = [];
    const viewport = document.documentElement.clientWidth;
    for (const table of Array.from(document.querySelectorAll<HTMLTableElement>('main table'))) {
      if (table.getClientRects().length === 0) continue; // not rendered (closed details, hidden tab)
      if (table.closest('.uplot')) continue; // the plot library's own legend, not a data table
      const name = table.getAttribute('aria-label') ?? table.querySelector('caption')?.textContent ?? '(unnamed)';
      const head = table.tHead ?? table.rows[0];
      const keys = head ? Array.from(head.querySelectorAll<HTMLElement>('[data-key-column]')) : [];
      if (keys.length === 0) {
        unmarked.push(name);
        continue;
      }
      let limit = viewport;
      for (let el = table.parentElement; el; el = el.parentElement) {
        const ox = getComputedStyle(el).overflowX;
        if (ox === 'auto' || ox === 'scroll' || ox === 'hidden') {
          el.scrollLeft = 0;
          limit = Math.min(limit, el.getBoundingClientRect().right);
        }
      }
      for (const k of keys) {
        const r = k.getBoundingClientRect();
        if (r.left < -0.5 || r.right > limit + 0.5)
          outside.push({ table: name, column: k.dataset.keyColumn ?? '', left: r.left, right: r.right, limit });
      }
    }
    return { unmarked, outside };
  });
}

/** Pairs of visible boxes in the main area that cover each other. */
async function overlaps(page: Page): Promise<string[]> {
  return page.evaluate(() => {
    const main = document.querySelector('main');
    if (!main) return ['no main element'];
    type Box = { node: Node; el: Element; r: { l: number; t: number; r: number; b: number }; what: string };
    const boxes: Box[] = [];

    const hidden = (el: Element): boolean => {
      for (let e: Element | null = el; e && e !== main.parentElement; e = e.parentElement) {
        const s = getComputedStyle(e);
        if (s.visibility === 'hidden' || s.display === 'none' || Number(s.opacity) === 0) return true;
        if (e.getAttribute('aria-hidden') === 'true') return true;
        // the content of a closed <details> is not shown (only its summary)
        if (
          e.parentElement?.tagName === 'DETAILS' &&
          !(e.parentElement as HTMLDetailsElement).open &&
          e.tagName !== 'SUMMARY'
        )
          return true;
        // visually hidden (sr-only): clipped to nothing
        if (s.position === 'absolute' && ((s.clip !== 'auto' && s.clip !== '') || s.clipPath !== 'none')) return true;
      }
      return false;
    };
    /** The rectangle as far as the scroll and clip boxes around it let it be seen, or null. */
    const visible = (from: Element | null, rect: DOMRect) => {
      let l = rect.left,
        t = rect.top,
        r = rect.right,
        b = rect.bottom;
      for (let e = from; e && e !== document.body; e = e.parentElement) {
        const s = getComputedStyle(e);
        if (s.overflowX !== 'visible' || s.overflowY !== 'visible') {
          const c = e.getBoundingClientRect();
          if (s.overflowX !== 'visible') {
            l = Math.max(l, c.left);
            r = Math.min(r, c.right);
          }
          if (s.overflowY !== 'visible') {
            t = Math.max(t, c.top);
            b = Math.min(b, c.bottom);
          }
        }
      }
      return r - l > 1 && b - t > 1 ? { l, t, r, b } : null;
    };
    const label = (el: Element, text?: string) =>
      `${el.tagName.toLowerCase()}${el.getAttribute('data-testid') ? `[${el.getAttribute('data-testid')}]` : ''} "${(text ?? el.textContent ?? el.getAttribute('aria-label') ?? '').trim().slice(0, 40)}"`;

    const ATOMIC = 'button, input, select, textarea, img, svg, canvas, summary';
    for (const el of Array.from(main.querySelectorAll(ATOMIC))) {
      if (el.parentElement?.closest(ATOMIC)) continue; // an icon inside a button is the button
      if (hidden(el)) continue;
      const v = visible(el.parentElement, el.getBoundingClientRect());
      if (v) boxes.push({ node: el, el, r: v, what: label(el) });
    }
    const walker = document.createTreeWalker(main, NodeFilter.SHOW_TEXT);
    for (let n = walker.nextNode(); n; n = walker.nextNode()) {
      const text = n.textContent ?? '';
      if (!text.trim()) continue;
      const el = n.parentElement!;
      if (el.closest(ATOMIC) || hidden(el)) continue;
      const range = document.createRange();
      range.selectNodeContents(n);
      for (const rect of Array.from(range.getClientRects())) {
        const v = visible(el, rect);
        if (v) boxes.push({ node: n, el, r: v, what: label(el, text) });
      }
    }

    const out: string[] = [];
    boxes.sort((a, b) => a.r.l - b.r.l);
    for (let i = 0; i < boxes.length && out.length < 10; i++) {
      const a = boxes[i];
      for (let j = i + 1; j < boxes.length && boxes[j].r.l < a.r.r - 1; j++) {
        const b = boxes[j];
        const w = Math.min(a.r.r, b.r.r) - Math.max(a.r.l, b.r.l);
        const h = Math.min(a.r.b, b.r.b) - Math.max(a.r.t, b.r.t);
        if (w <= 2 || h <= 2) continue;
        if (a.node === b.node || a.node.contains(b.node) || b.node.contains(a.node)) continue;
        out.push(`${a.what} overlaps ${b.what} by ${Math.round(w)} x ${Math.round(h)} px`);
      }
    }
    return out;
  });
}

for (const size of SIZES) {
  for (const p of MAIN_PAGES) {
    test(`layout of ${p.name} at ${size.width} x ${size.height}`, async ({ page }) => {
      await page.setViewportSize(size);
      if (p.user) await signInDemo(page, p.user);
      const path = await openMainPage(page, p);

      const { unmarked, outside } = await keyColumnProblems(page);
      expect(unmarked, `tables without data-key-column on ${path}`).toEqual([]);
      expect(outside, `key columns outside the viewport on ${path}`).toEqual([]);

      const pageScroll = await page.evaluate(() => document.documentElement.scrollWidth - window.innerWidth);
      expect(pageScroll, `the page ${path} scrolls sideways`).toBeLessThanOrEqual(0);

      expect(await overlaps(page), `overlapping content on ${path}`).toEqual([]);

      if (size.width === 1920 && !p.narrow) {
        const { header, main } = await page.evaluate(() => {
          const m = document.querySelector('main')!;
          const s = getComputedStyle(m);
          return {
            header: m.querySelector('h1')!.closest('header')!.getBoundingClientRect().width,
            main: m.clientWidth - parseFloat(s.paddingLeft) - parseFloat(s.paddingRight),
          };
        });
        expect(header, `the page ${path} uses the width of a 1920 px screen`).toBeGreaterThan(main * 0.95);
      }
    });
  }
}
