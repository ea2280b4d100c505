/**
 * A long hash (SHA-256, fingerprints) shortened to its first 12 and last 4 characters, with the
 * full value in the tooltip and a button that copies the full value. Short enough that the table
 * columns around it stay in view at 1280 px; the full value is one click away for comparison.
 */
import { useEffect, useState } from 'react';

export function shortHash(value: string): string {
  return value.length <= 20 ? value : `${value.slice(0, 12)}…${value.slice(-4)}`;
}

async function copyText(text: string): Promise<boolean> {
  try {
    await navigator.clipboard.writeText(text);
    return true;
  } catch {
    return false; // no clipboard permission (plain http, or refused): the tooltip still shows it
  }
}

export function Hash({ value, what = 'SHA-256' }: { value: string; what?: string }) {
  const [state, setState] = useState<'idle' | 'copied' | 'failed'>('idle');
  useEffect(() => {
    if (state === 'idle') return;
    const t = window.setTimeout(() => setState('idle'), 2000);
    return () => window.clearTimeout(t);
  }, [state]);
  const short = shortHash(value);
  return (
    <span className="inline-flex items-center gap-1.5 whitespace-nowrap" data-hash={value}>
      <code className="text-xs" title={value}>
        {short}
      </code>
      <button
        type="button"
        onClick={() => void copyText(value).then((ok) => setState(ok ? 'copied' : 'failed'))}
        aria-label={`Copy the full ${what} ${short}`}
        className="rounded border border-line px-1.5 text-xs text-petrol hover:border-petrol"
      >
        {state === 'copied' ? 'Copied' : state === 'failed' ? 'Copy failed' : 'Copy'}
      </button>
      <span className="sr-only" aria-live="polite">
        {state === 'copied' ? `${what} copied` : ''}
      </span>
    </span>
  );
}
