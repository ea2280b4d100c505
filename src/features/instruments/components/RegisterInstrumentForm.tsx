/** Register an instrument (QA). A mid-IR instrument starts with the Ph. Eur. 2.2.24 FT check specification. */
import { useState, type FormEvent } from 'react';
import { InputField, SelectField } from '../../../components/Field';
import { FormFooter } from '../../../components/FormFooter';
import { bindTexts, fieldErrors } from '../../../lib/form-state';
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
    if (!parsed.success) return setErrors(fieldErrors(parsed.error.issues));
    setErrors({});
    create.mutate(parsed.data as InstrumentCreateInput, { onSuccess: (i) => onDone(i.id) });
  };
  const bind = bindTexts(v, setV);
  return (
    <form onSubmit={submit} noValidate className="grid gap-4 md:grid-cols-3" aria-label="New instrument">
      <InputField id="in-name" label="Name" error={errors.name} {...bind('name')} />
      <InputField id="in-serial" label="Serial number" error={errors.serialNumber} {...bind('serialNumber')} />
      <InputField id="in-loc" label="Location" error={errors.location} {...bind('location')} />
      <SelectField id="in-tech" label="Technique" {...bind('technique')}>
        <option value="mid-ir">Mid-IR</option>
        <option value="nir">Near-IR</option>
      </SelectField>
      <SelectField id="in-samp" label="Sampling" {...bind('sampling')}>
        {SAMPLINGS.map((s) => (
          <option key={s} value={s}>
            {SAMPLING_LABELS[s]}
          </option>
        ))}
      </SelectField>
      <InputField
        id="in-valid"
        label="Check valid for (hours)"
        error={errors.checkValidityHours}
        inputMode="numeric"
        {...bind('checkValidityHours')}
      />
      <FormFooter mutation={create} submitLabel="Register instrument" onCancel={onCancel} span="md:col-span-3" />
    </form>
  );
}
