/** "Check due" or "Check valid until ...": words and an icon, never colour alone. */
import { DateTime } from '../../../components/DateTime';
import { ClockIcon, TickIcon } from '../../../components/Icons';
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
        <ClockIcon />
        Check due
      </span>
    );
  return (
    <span
      className={`inline-flex items-center gap-1.5 rounded-md border border-pass/40 bg-pass-soft font-medium text-pass ${big}`}
      data-check="valid"
    >
      <TickIcon width={2.4} />
      <span>
        Check valid until <DateTime value={instrument.validCheck.validUntil} />
      </span>
    </span>
  );
}
