/** A period as two dates side by side: its first and its last day. */
import { InputField } from './Field';

export function PeriodFields({
  ids,
  labels = ['First day (UTC)', 'Last day (UTC)'],
  from,
  to,
  onFrom,
  onTo,
  groupLabel,
}: {
  /** the ids of the first and the last day's inputs */
  ids: [string, string];
  labels?: [string, string];
  from: string;
  to: string;
  onFrom: (day: string) => void;
  onTo: (day: string) => void;
  /** names the pair as a group for assistive technology, e.g. "Period" */
  groupLabel?: string;
}) {
  return (
    <div className="flex flex-wrap gap-3" role={groupLabel ? 'group' : undefined} aria-label={groupLabel}>
      <InputField id={ids[0]} label={labels[0]} type="date" value={from} onChange={(e) => onFrom(e.target.value)} />
      <InputField id={ids[1]} label={labels[1]} type="date" value={to} onChange={(e) => onTo(e.target.value)} />
    </div>
  );
}
