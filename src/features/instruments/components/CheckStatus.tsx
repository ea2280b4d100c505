/** "Check due" or "Check valid until ...": words and an icon, never colour alone. */
import { DateTime } from '../../../components/DateTime';
import type { InstrumentListItem } from '../api';

export function CheckStatus({
  instrument,
  size = 'md',
}: {
  instrument: Pick<InstrumentListItem, 'checkDue' | 'validCheck' | 'active'>;
  size?: 'md' | 'lg';
}) {
  const big = size === 'lg' ? 'text-base px-3 py-1.5' : 'text-sm px-2 py-0.5';
  if (!instrument.active)
    return (
      <span
        className={`inline-flex items-center gap-1.5 rounded-md border border-line bg-paper font-medium text-muted ${big}`}
      >
        ⊘ Out of use
      </span>
    );
  if (instrument.checkDue || !instrument.validCheck)
    return (
      <span
        className={`inline-flex items-center gap-1.5 rounded-md border border-amber/50 bg-amber-soft font-medium whitespace-nowrap text-amber ${big}`}
        data-check="due"
      >
        <svg
          viewBox="0 0 20 20"
          className="size-4"
          aria-hidden
          fill="none"
          stroke="currentColor"
          strokeWidth={1.8}
          strokeLinecap="round"
        >
          <circle cx="10" cy="10" r="7.2" />
          <path d="M10 6v4.3l2.8 1.7" />
        </svg>
        Check due
      </span>
    );
  return (
    <span
      className={`inline-flex items-center gap-1.5 rounded-md border border-pass/40 bg-pass-soft font-medium text-pass ${big}`}
      data-check="valid"
    >
      <svg
        viewBox="0 0 20 20"
        className="size-4"
        aria-hidden
        fill="none"
        stroke="currentColor"
        strokeWidth={2.4}
        strokeLinecap="round"
        strokeLinejoin="round"
      >
        <path d="M4 10.5 8.2 14.5 16 6" />
      </svg>
      <span>
        Check valid until <DateTime value={instrument.validCheck.validUntil} />
      </span>
    </span>
  );
}
