/** A titled white panel on the page: a section named by its heading. */
import type { ReactNode } from 'react';

export interface PanelProps {
  /** the heading's id (the section is labelled by it) */
  id: string;
  title: ReactNode;
  /** h2 on a page, h3 inside a section that has its own h2 */
  level?: 2 | 3;
  /** the section's spacing and layout, e.g. "mb-4 p-3 text-sm" */
  className: string;
  titleClassName: string;
  testId?: string;
  children: ReactNode;
}

export function Panel({ id, title, level = 2, className, titleClassName, testId, children }: PanelProps) {
  const Heading = level === 2 ? 'h2' : 'h3';
  return (
    <section
      aria-labelledby={id}
      className={`rounded-md border border-line bg-white ${className}`}
      data-testid={testId}
    >
      <Heading id={id} className={titleClassName}>
        {title}
      </Heading>
      {children}
    </section>
  );
}
