import type { ReactNode } from 'react';

export interface EmptyStateProps {
  /** what is (not) there, in words: "No lots await verification." */
  title: ReactNode;
  /** what to do next, if anything */
  children?: ReactNode;
  action?: ReactNode;
  className?: string;
}

export function EmptyState({ title, children, action, className = '' }: EmptyStateProps) {
  return (
    <div className={`rounded-md border border-dashed border-line bg-white/60 px-4 py-6 text-center ${className}`}>
      <p className="font-medium text-ink">{title}</p>
      {children && <div className="mt-1 text-sm text-muted">{children}</div>}
      {action && <div className="mt-3 flex justify-center">{action}</div>}
    </div>
  );
}
