import type { ReactNode } from 'react';

export interface PageHeaderProps {
  title: ReactNode;
  /** one line under the title: what this page is for, or the record's key facts */
  subtitle?: ReactNode;
  /** buttons on the right */
  actions?: ReactNode;
  /** small line above the title (e.g. a breadcrumb link) */
  eyebrow?: ReactNode;
}

export function PageHeader({ title, subtitle, actions, eyebrow }: PageHeaderProps) {
  return (
    <header className="mb-5 flex flex-wrap items-end justify-between gap-3 border-b border-line pb-3">
      <div className="min-w-0">
        {eyebrow && <div className="mb-1 text-sm text-muted">{eyebrow}</div>}
        <h1 className="text-2xl text-ink">{title}</h1>
        {subtitle && <p className="mt-1 text-sm text-muted">{subtitle}</p>}
      </div>
      {actions && <div className="flex flex-wrap items-center gap-2">{actions}</div>}
    </header>
  );
}
