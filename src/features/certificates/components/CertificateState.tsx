/** Current or superseded, in words and icon (never colour alone). */
import type { CertificateMeta } from '../api';

export function CertificateState({ certificate }: { certificate: Pick<CertificateMeta, 'current' | 'supersededBy'> }) {
  if (certificate.current)
    return (
      <span className="inline-flex items-center gap-1 text-sm text-pass" data-state="current">
        <svg
          viewBox="0 0 20 20"
          className="size-4"
          aria-hidden
          fill="none"
          stroke="currentColor"
          strokeWidth={2.2}
          strokeLinecap="round"
          strokeLinejoin="round"
        >
          <path d="M4 10.5 8.2 14.5 16 6" />
        </svg>
        Current
      </span>
    );
  return (
    <span className="inline-flex items-center gap-1 text-sm text-muted" data-state="superseded">
      <svg
        viewBox="0 0 20 20"
        className="size-4"
        aria-hidden
        fill="none"
        stroke="currentColor"
        strokeWidth={2}
        strokeLinecap="round"
      >
        <path d="M4 10h12M12 6l4 4-4 4" />
      </svg>
      Superseded{certificate.supersededBy ? ` by ${certificate.supersededBy.number}` : ''}
    </span>
  );
}
