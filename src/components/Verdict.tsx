/** A verdict is never colour alone: icon + word + colour. */

export type VerdictKind = 'pass' | 'fail' | 'invalid' | 'pending';

export interface VerdictProps {
  verdict: VerdictKind;
  /** replaces the default word ("Pass", "Fail", "Invalid", "Pending") */
  label?: string;
  /** 'lg' for bench result screens (readable from a metre away) */
  size?: 'sm' | 'md' | 'lg';
  className?: string;
}

const WORDS: Record<VerdictKind, string> = { pass: 'Pass', fail: 'Fail', invalid: 'Invalid', pending: 'Pending' };
const STYLE: Record<VerdictKind, string> = {
  pass: 'text-pass bg-pass-soft border-pass/40',
  fail: 'text-fail bg-fail-soft border-fail/40',
  invalid: 'text-amber-ink bg-amber-soft border-amber/50',
  pending: 'text-muted bg-white border-line',
};
const SIZE = {
  sm: { box: 'text-xs px-1.5 py-0.5 gap-1', icon: 'size-3.5' },
  md: { box: 'text-sm px-2 py-0.5 gap-1.5', icon: 'size-4' },
  lg: { box: 'text-2xl px-4 py-2 gap-2.5 font-semibold', icon: 'size-7' },
};

function Icon({ kind, className }: { kind: VerdictKind; className: string }) {
  const common = {
    viewBox: '0 0 20 20',
    className,
    'aria-hidden': true,
    fill: 'none',
    stroke: 'currentColor',
    strokeWidth: 2.4,
    strokeLinecap: 'round' as const,
    strokeLinejoin: 'round' as const,
  };
  switch (kind) {
    case 'pass':
      return (
        <svg {...common}>
          <path d="M4 10.5 8.2 14.5 16 6" />
        </svg>
      );
    case 'fail':
      return (
        <svg {...common}>
          <path d="M5 5l10 10M15 5 5 15" />
        </svg>
      );
    case 'invalid':
      return (
        <svg {...common}>
          <path d="M10 2.8 18 17H2L10 2.8Z" strokeWidth={1.8} />
          <path d="M10 8v4M10 14.6v.1" />
        </svg>
      );
    default:
      return (
        <svg {...common}>
          <circle cx="10" cy="10" r="7.2" strokeWidth={1.8} />
          <path d="M10 6v4.3l2.8 1.7" strokeWidth={1.8} />
        </svg>
      );
  }
}

export function Verdict({ verdict, label, size = 'md', className = '' }: VerdictProps) {
  const s = SIZE[size];
  return (
    <span
      className={`inline-flex items-center rounded-md border font-medium whitespace-nowrap ${STYLE[verdict]} ${s.box} ${className}`}
      data-verdict={verdict}
    >
      <Icon kind={verdict} className={s.icon} />
      <span>{label ?? WORDS[verdict]}</span>
    </span>
  );
}
