/** Pick the instrument for a test attempt; instruments whose check is due are shown with the reason and cannot be chosen. */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Select } from '../../../components/Field';
import { useTestingInstruments } from '../api';

export function InstrumentPicker({
  current,
  actionLabel,
  onPick,
  busy,
  error,
}: {
  current?: number | null;
  actionLabel: string;
  onPick: (id: number) => void;
  busy?: boolean;
  error?: unknown;
}) {
  const list = useTestingInstruments();
  const [chosen, setChosen] = useState<string>(current ? String(current) : '');
  if (list.isPending) return <p className="text-sm text-muted">Loading instruments…</p>;
  if (list.isError) return <ErrorNote error={list.error} onRetry={() => void list.refetch()} />;
  const selected = list.data.find((i) => String(i.instrument.id) === chosen);
  const unusable = list.data.filter((i) => !i.usable);
  return (
    <div className="flex flex-col gap-3">
      <div className="flex flex-wrap items-end gap-3">
        <Field id="instrument" label="Instrument" className="min-w-64 flex-1">
          <Select id="instrument" bench value={chosen} onChange={(e) => setChosen(e.target.value)}>
            <option value="">Choose the instrument</option>
            {list.data.map((i) => (
              <option key={i.instrument.id} value={i.instrument.id} disabled={!i.usable}>
                {i.instrument.name} · {i.instrument.location || i.instrument.serialNumber}
                {i.usable ? '' : ' (instrument check due)'}
              </option>
            ))}
          </Select>
        </Field>
        <Button
          size="bench"
          variant="primary"
          disabled={!selected?.usable}
          busy={busy}
          onClick={() => selected && onPick(selected.instrument.id)}
        >
          {actionLabel}
        </Button>
      </div>
      {unusable.length > 0 && (
        <ul className="text-sm text-amber-ink" aria-label="Instruments that cannot be used now">
          {unusable.map((i) => (
            <li key={i.instrument.id}>⚠ {i.reason}</li>
          ))}
        </ul>
      )}
      {!!error && <ErrorNote error={error} />}
    </div>
  );
}
