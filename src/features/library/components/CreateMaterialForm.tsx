/** New material (grade): code, name, grade, monograph reference, technique(s), notes. */
import { useState, type FormEvent } from 'react';
import { Field, Input, InputField, TextareaField } from '../../../components/Field';
import { FormFooter } from '../../../components/FormFooter';
import { fieldErrors } from '../../../lib/form-state';
import { materialCreateSchema, TECHNIQUE_LABELS, TECHNIQUES } from '../../../../server/modules/library/contract';
import { useCreateMaterial } from '../api';

export function CreateMaterialForm({ onCreated, onCancel }: { onCreated: (id: number) => void; onCancel: () => void }) {
  const create = useCreateMaterial();
  const [v, setV] = useState({
    code: '',
    name: '',
    grade: '',
    monographRef: '',
    notes: '',
    techniques: ['mid-ir-atr'] as string[],
  });
  const [errors, setErrors] = useState<Record<string, string>>({});

  const submit = (e: FormEvent) => {
    e.preventDefault();
    const parsed = materialCreateSchema.safeParse({
      ...v,
      code: v.code.trim().toUpperCase(),
      notes: v.notes.trim() || null,
    });
    if (!parsed.success) {
      setErrors(fieldErrors(parsed.error.issues));
      return;
    }
    setErrors({});
    create.mutate(parsed.data, { onSuccess: (m) => onCreated(m.id) });
  };

  return (
    <form onSubmit={submit} noValidate className="grid gap-4 md:grid-cols-2" aria-label="New material">
      <Field
        id="mat-code"
        label="Code"
        hint="Capital letters, digits, dot, dash or underscore; it names the reference spectra."
        error={errors.code}
      >
        <Input
          id="mat-code"
          autoComplete="off"
          spellCheck={false}
          value={v.code}
          onChange={(e) => setV({ ...v, code: e.target.value.toUpperCase() })}
          invalid={!!errors.code}
        />
      </Field>
      <InputField
        id="mat-name"
        label="Name"
        error={errors.name}
        autoComplete="off"
        value={v.name}
        onChange={(e) => setV({ ...v, name: e.target.value })}
        invalid={!!errors.name}
      />
      <InputField
        id="mat-grade"
        label="Grade"
        error={errors.grade}
        autoComplete="off"
        value={v.grade}
        onChange={(e) => setV({ ...v, grade: e.target.value })}
      />
      <InputField
        id="mat-mono"
        label="Monograph reference"
        hint="Free text, e.g. Ph. Eur. 0187"
        error={errors.monographRef}
        autoComplete="off"
        value={v.monographRef}
        onChange={(e) => setV({ ...v, monographRef: e.target.value })}
      />
      <fieldset className="md:col-span-2">
        <legend className="text-sm font-medium">Technique(s)</legend>
        <div className="mt-1 flex flex-wrap gap-4">
          {TECHNIQUES.map((t) => (
            <label key={t} className="inline-flex min-h-9 items-center gap-2 text-sm">
              <input
                type="checkbox"
                checked={v.techniques.includes(t)}
                onChange={(e) =>
                  setV({
                    ...v,
                    techniques: e.target.checked ? [...v.techniques, t] : v.techniques.filter((x) => x !== t),
                  })
                }
              />
              {TECHNIQUE_LABELS[t]}
            </label>
          ))}
        </div>
        <p className="mt-1 text-sm text-muted">
          Identity method version 1 starts as a draft from the default for the first technique.
        </p>
        {errors.techniques && (
          <p role="alert" className="text-sm text-fail">
            {errors.techniques}
          </p>
        )}
      </fieldset>
      <TextareaField
        id="mat-notes"
        label="Notes"
        fieldClassName="md:col-span-2"
        value={v.notes}
        onChange={(e) => setV({ ...v, notes: e.target.value })}
      />
      <FormFooter mutation={create} submitLabel="Create material" onCancel={onCancel} span="md:col-span-2" />
    </form>
  );
}
