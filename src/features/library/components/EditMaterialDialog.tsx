/** Change a material's descriptive fields; a reason is required (audited with before and after). */
import { useEffect, useEffectEvent, useState, type FormEvent } from 'react';
import { Button } from '../../../components/Button';
import { Dialog } from '../../../components/Dialog';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, Textarea } from '../../../components/Field';
import { useUpdateMaterial, type Material } from '../api';

export function EditMaterialDialog({
  open,
  material,
  onClose,
}: {
  open: boolean;
  material: Material;
  onClose: () => void;
}) {
  const update = useUpdateMaterial();
  const [v, setV] = useState({ name: '', grade: '', monographRef: '', notes: '', active: true, reason: '' });
  const [problem, setProblem] = useState<string | null>(null);
  // Each opening starts from the material as it is then (a refetch while open keeps the edits).
  const start = useEffectEvent(() => {
    setV({
      name: material.name,
      grade: material.grade,
      monographRef: material.monographRef,
      notes: material.notes ?? '',
      active: material.active,
      reason: '',
    });
    setProblem(null);
    update.reset();
  });
  useEffect(() => {
    if (open) start();
  }, [open]);
  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (v.reason.trim().length < 3) return setProblem('Give a reason for the change (at least 3 characters).');
    setProblem(null);
    update.mutate(
      {
        id: material.id,
        name: v.name.trim(),
        grade: v.grade.trim(),
        monographRef: v.monographRef.trim(),
        notes: v.notes.trim() || null,
        active: v.active,
        reason: v.reason.trim(),
      },
      { onSuccess: onClose },
    );
  };
  return (
    <Dialog open={open} onClose={onClose} title={`Change ${material.code}`} busy={update.isPending}>
      <form onSubmit={submit} className="grid gap-3" aria-label="Change material">
        <Field id="em-name" label="Name">
          <Input id="em-name" value={v.name} onChange={(e) => setV({ ...v, name: e.target.value })} />
        </Field>
        <Field id="em-grade" label="Grade">
          <Input id="em-grade" value={v.grade} onChange={(e) => setV({ ...v, grade: e.target.value })} />
        </Field>
        <Field id="em-mono" label="Monograph reference">
          <Input id="em-mono" value={v.monographRef} onChange={(e) => setV({ ...v, monographRef: e.target.value })} />
        </Field>
        <Field id="em-notes" label="Notes">
          <Textarea id="em-notes" value={v.notes} onChange={(e) => setV({ ...v, notes: e.target.value })} />
        </Field>
        <label className="inline-flex min-h-9 items-center gap-2 text-sm">
          <input type="checkbox" checked={v.active} onChange={(e) => setV({ ...v, active: e.target.checked })} /> Active
          (inactive materials take no new references or lots)
        </label>
        <Field id="em-reason" label="Reason for the change">
          <Input id="em-reason" value={v.reason} onChange={(e) => setV({ ...v, reason: e.target.value })} />
        </Field>
        {problem && <ErrorNote error={problem} />}
        {update.isError && <ErrorNote error={update.error} />}
        <div className="flex justify-end gap-2">
          <Button onClick={onClose} disabled={update.isPending}>
            Cancel
          </Button>
          <Button type="submit" variant="primary" busy={update.isPending}>
            Save change
          </Button>
        </div>
      </form>
    </Dialog>
  );
}
