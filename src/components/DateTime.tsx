/** A UTC instant shown in the site's time zone with the zone named; the UTC value on hover. */
import { formatDate, formatDateTime } from '../lib/format';

export interface DateTimeProps {
  value: string | number | Date | null | undefined;
  /** show seconds (audit trail, signatures) */
  seconds?: boolean;
  /** only the calendar day at the site */
  dateOnly?: boolean;
  className?: string;
}

export function DateTime({ value, seconds, dateOnly, className = '' }: DateTimeProps) {
  if (value === null || value === undefined || value === '') return <span className={className}>—</span>;
  const d = new Date(value);
  if (Number.isNaN(d.getTime())) return <span className={className}>—</span>;
  const text = dateOnly ? formatDate(d) : formatDateTime(d, { seconds });
  return (
    <time
      dateTime={d.toISOString()}
      title={`${d
        .toISOString()
        .replace('T', ' ')
        .replace(/\.\d+Z$/, 'Z')
        .replace('Z', ' UTC')}`}
      className={`tabular-nums whitespace-nowrap ${className}`}
    >
      {text}
    </time>
  );
}
