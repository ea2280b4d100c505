/**
 * A box that scrolls sideways when its content (usually a table) is wider than the page.
 * While the content overflows:
 * - the box is a named region with tabindex 0, so it is reachable by keyboard and the arrow keys
 *   scroll it (WCAG 2.1.1; docs/accessibility.md);
 * - a visible affordance says so: a line above the box ("More columns to the right, scroll
 *   sideways") and a shadow on the edge where columns are hidden, both gone at the end.
 * When everything fits, the box is a plain container (no extra tab stop).
 * Tables inside mark their key columns with data-key-column (DataTable does); the first key column
 * stays in view while scrolling when `stickyFirstColumn` is set on the table (see DataTable).
 */
import { useCallback, useLayoutEffect, useRef, useState, type ReactNode } from 'react';

export interface ScrollRegionProps {
  /** accessible name of the region while it scrolls, e.g. the table's name */
  label: string;
  children: ReactNode;
  className?: string;
}

interface Overflow {
  left: boolean;
  right: boolean;
}

export function ScrollRegion({ label, children, className = '' }: ScrollRegionProps) {
  const ref = useRef<HTMLDivElement>(null);
  const [over, setOver] = useState<Overflow>({ left: false, right: false });

  const measure = useCallback(() => {
    const el = ref.current;
    if (!el) return;
    const left = el.scrollLeft > 1;
    const right = el.scrollLeft + el.clientWidth < el.scrollWidth - 1;
    setOver((o) => (o.left === left && o.right === right ? o : { left, right }));
  }, []);

  useLayoutEffect(() => {
    const el = ref.current;
    if (!el) return;
    measure();
    const ro = new ResizeObserver(measure);
    ro.observe(el);
    if (el.firstElementChild) ro.observe(el.firstElementChild);
    return () => ro.disconnect();
  }, [measure]);

  const scrolls = over.left || over.right;
  return (
    <div className={`flex min-w-0 flex-col gap-1 ${className}`}>
      {scrolls && (
        <p className="text-xs text-muted" data-testid="scroll-hint">
          {over.right ? 'More columns to the right: scroll sideways' : 'More columns to the left: scroll back'}
          {' (shift + mouse wheel, or focus the table and use the arrow keys).'}
        </p>
      )}
      <div className="relative min-w-0">
        <div
          ref={ref}
          onScroll={measure}
          role={scrolls ? 'region' : undefined}
          aria-label={scrolls ? label : undefined}
          tabIndex={scrolls ? 0 : undefined}
          data-scrolls={scrolls ? 'true' : undefined}
          className="scroll-region overflow-x-auto rounded-md border border-line bg-white"
        >
          {children}
        </div>
        <span
          aria-hidden
          className={`pointer-events-none absolute inset-y-0 right-0 w-6 rounded-r-md bg-gradient-to-l from-ink/15 to-transparent transition-opacity ${over.right ? 'opacity-100' : 'opacity-0'}`}
        />
      </div>
    </div>
  );
}
