/** Drumline's own wordmark: a drum outline with a trace across it, and the name. */
export function Wordmark({ className = '', inverted = false }: { className?: string; inverted?: boolean }) {
  return (
    <span className={`inline-flex items-center gap-2 ${className}`}>
      <svg viewBox="0 0 32 32" className="size-7 shrink-0" aria-hidden>
        <rect width="32" height="32" rx="6" fill={inverted ? '#f7f7f2' : '#0f5e6e'} />
        <g
          fill="none"
          stroke={inverted ? '#0f5e6e' : '#f7f7f2'}
          strokeWidth="2.2"
          strokeLinecap="round"
          strokeLinejoin="round"
        >
          <ellipse cx="16" cy="8.5" rx="8" ry="2.8" />
          <path d="M8 8.5v15c0 1.6 3.6 2.9 8 2.9s8-1.3 8-2.9v-15" />
          <path
            d="M10.5 19.5l2.5-3 2 4.5 2.5-7 2 5.5 2-2"
            stroke={inverted ? '#b7791f' : '#e8c27a'}
            strokeWidth="1.8"
          />
        </g>
      </svg>
      <span className="text-lg font-semibold tracking-tight">Drumline</span>
    </span>
  );
}
