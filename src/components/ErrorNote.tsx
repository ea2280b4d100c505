/** An error in plain words, with an optional retry. Accepts an Error/ApiError or a sentence. */
import type { ReactNode } from 'react';
import { errorMessage } from '../lib/api';

export interface ErrorNoteProps {
  error: unknown;
  title?: ReactNode;
  onRetry?: () => void;
  className?: string;
}

export function ErrorNote({ error, title, onRetry, className = '' }: ErrorNoteProps) {
  if (!error) return null;
  const text = typeof error === 'string' ? error : errorMessage(error);
  return (
    <div
      role="alert"
      className={`flex items-start gap-2 rounded-md border border-fail/40 bg-fail-soft px-3 py-2 text-sm text-ink ${className}`}
    >
      <svg aria-hidden viewBox="0 0 20 20" className="mt-0.5 size-4 shrink-0 text-fail" fill="currentColor">
        <path d="M10 1.5a8.5 8.5 0 1 0 0 17 8.5 8.5 0 0 0 0-17Zm-.9 4.2h1.8v5.6H9.1V5.7Zm0 7.3h1.8v1.8H9.1V13Z" />
      </svg>
      <div className="min-w-0 flex-1">
        {title && <p className="font-medium">{title}</p>}
        <p>{text}</p>
      </div>
      {onRetry && (
        <button
          type="button"
          onClick={onRetry}
          className="shrink-0 font-medium text-petrol underline underline-offset-2"
        >
          Try again
        </button>
      )}
    </div>
  );
}
