/** Register an instrument (QA). A mid-IR instrument starts with the Ph. Eur. 2.2.24 FT check specification. */
import { useState, type FormEvent } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, Select } from '../../../components/Field';
import { instrumentCreateSchema, SAMPLING_LABELS, SAMPLINGS } from '../../../../server/modules/instruments/contract';
import { useCreateInstrument, type InstrumentCreateInput } from '../api';

export function RegisterInstrumentForm({ onDone, onCancel }: { onDone: (id: number) => void; onCancel: () => void }) {
  const create = useCreateInstrument();
  const [v, setV] = useState({
    name: '',
    serialNumber: '',
    technique: 'mid-ir',
    sampling: 'atr',
    location: '',
    checkValidityHours: '24',
  });
  const [errors, setErrors] = useState<Record<string, string>>({});
  const submit = (e: FormEvent) => {
    e.preventDefault();
    const parsed = instrumentCreateSchema.safeParse({ ...v, checkValidityHours: Number(v.checkValidityHours) });
    if (!parsed.success) {
      const out: Record<string, string> = {};
      for (const i of parsed.error.issues) out[String(i.path[0])] ??= i.message;
      return setErrors(out);
    }
    setErrors({});
    create.mutate(parsed.data as InstrumentCreateInput, { onSuccess: (i) => onDone(i.id) });
  };
  return (
    <form onSubmit={submit} noValidate className="grid gap-4 md:grid-cols-3" aria-label="New instrument">
      <Field id="in-name" label="Name" error={errors.name}>
        <Input id="in-name" value={v.name} onChange={(e) => setV({ ...v, name: e.target.value })} />
      </Field>
      <Field id="in-serial" label="Serial number" error={errors.serialNumber}>
        <Input id="in-serial" value={v.serialNumber} onChange={(e) => setV({ ...v, serialNumber: e.target.value })} />
      </Field>
      <Field id="in-loc" label="Location" error={errors.location}>
        <Input id="in-loc" value={v.location} onChange={(e) => setV({ ...v, location: e.target.value })} />
      </Field>
      <Field id="in-tech" label="Technique">
        <Select id="in-tech" value={v.technique} onChange={(e) => setV({ ...v, technique: e.target.value })}>
          <option value="mid-ir">Mid-IR</option>
          <option value="nir">Near-IR</option>
        </Select>
      </Field>
      <Field id="in-samp" label="Sampling">
        <Select id="in-samp" value={v.sampling} onChange={(e) => setV({ ...v, sampling: e.target.value })}>
          {SAMPLINGS.map((s) => (
            <option key={s} value={s}>
              {SAMPLING_LABELS[s]}
            </option>
          ))}
        </Select>
      </Field>
      <Field id="in-valid" label="Check valid for (hours)" error={errors.checkValidityHours}>
        <Input
          id="in-valid"
          inputMode="numeric"
          value={v.checkValidityHours}
          onChange={(e) => setV({ ...v, checkValidityHours: e.target.value })}
        />
      </Field>
      {create.isError && <ErrorNote error={create.error} className="md:col-span-3" />}
      <div className="flex gap-2 md:col-span-3">
        <Button type="submit" variant="primary" busy={create.isPending}>
          Register instrument
        </Button>
        <Button onClick={onCancel}>Cancel</Button>
      </div>
    </form>
  );
}
