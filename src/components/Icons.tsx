/** Line icons drawn in the text colour, 16 px, hidden from assistive technology (words say the same). */
import type { ReactNode } from 'react';

function LineIcon({ width, joinRound = false, children }: { width: number; joinRound?: boolean; children: ReactNode }) {
  return (
    <svg
      viewBox="0 0 20 20"
      className="size-4"
      aria-hidden
      fill="none"
      stroke="currentColor"
      strokeWidth={width}
      strokeLinecap="round"
      strokeLinejoin={joinRound ? 'round' : undefined}
    >
      {children}
    </svg>
  );
}

/** A tick: valid, current. */
export function TickIcon({ width }: { width: number }) {
  return (
    <LineIcon width={width} joinRound>
      <path d="M4 10.5 8.2 14.5 16 6" />
    </LineIcon>
  );
}

/** A clock: due, history. */
export function ClockIcon() {
  return (
    <LineIcon width={1.8}>
      <circle cx="10" cy="10" r="7.2" />
      <path d="M10 6v4.3l2.8 1.7" />
    </LineIcon>
  );
}

/** An arrow to the right: replaced by a later one. */
export function ArrowIcon() {
  return (
    <LineIcon width={2}>
      <path d="M4 10h12M12 6l4 4-4 4" />
    </LineIcon>
  );
}
