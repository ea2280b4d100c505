/** Register a received lot: material grade (only those with an approved method and reference), supplier, containers. */
import { useState, type FormEvent } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, Select, Textarea } from '../../../components/Field';
import { formatDate } from '../../../lib/format';
import { lotCreateSchema, MAX_CONTAINERS } from '../../../../server/modules/lots/contract';
import { SAMPLING_PLAN_LABELS, SOURCE_STATUS_LABELS } from '../../../../server/modules/suppliers/contract';
import { useReceiptSources, useReceivableMaterials, useReceiveLot, type LotDetail } from '../api';

/** Today at the site (the site's time zone, not the browser's). */
const today = () => formatDate(new Date());

export function LotReceiptForm({ onDone, onCancel }: { onDone: (lot: LotDetail) => void; onCancel: () => void }) {
  const materials = useReceivableMaterials();
  const receive = useReceiveLot();
  const [v, setV] = useState({
    materialId: '',
    sourceId: '',
    supplierLot: '',
    containerCount: '',
    receivedDate: today(),
    notes: '',
  });
  const [errors, setErrors] = useState<Record<string, string>>({});
  const set = (k: keyof typeof v) => (e: { target: { value: string } }) => setV({ ...v, [k]: e.target.value });

  const sources = useReceiptSources(v.materialId ? Number(v.materialId) : null);
  const source = sources.data?.find((s) => String(s.id) === v.sourceId) ?? null;

  const submit = (e: FormEvent) => {
    e.preventDefault();
    const parsed = lotCreateSchema.safeParse({
      materialId: v.materialId ? Number(v.materialId) : 0,
      supplierId: source?.supplier.id ?? 0,
      manufacturerId: source?.manufacturer?.id ?? null,
      supplierLot: v.supplierLot,
      containerCount: v.containerCount === '' ? NaN : Number(v.containerCount),
      receivedDate: v.receivedDate,
      notes: v.notes.trim() ? v.notes : null,
    });
    if (!parsed.success) {
      const out: Record<string, string> = {};
      for (const i of parsed.error.issues)
        out[String(i.path[0])] ??=
          i.path[0] === 'containerCount' && v.containerCount === '' ? 'Give the number of containers.' : i.message;
      return setErrors(out);
    }
    setErrors({});
    receive.mutate(parsed.data, { onSuccess: onDone });
  };

  if (materials.isError) return <ErrorNote error={materials.error} onRetry={() => void materials.refetch()} />;
  const none = materials.data && materials.data.length === 0;
  return (
    <form onSubmit={submit} noValidate className="grid gap-4 md:grid-cols-2" aria-label="Register a received lot">
      <Field
        id="lot-material"
        label="Material grade"
        error={errors.materialId}
        hint={
          none
            ? 'No grade has an approved identity method and reference yet; QA must approve one first.'
            : 'Only grades with an approved identity method and reference spectrum.'
        }
        className="md:col-span-2"
      >
        <Select
          id="lot-material"
          bench
          value={v.materialId}
          onChange={set('materialId')}
          disabled={!materials.data || none}
        >
          <option value="">{materials.isPending ? 'Loading…' : 'Choose the material grade'}</option>
          {materials.data?.map((m) => (
            <option key={m.id} value={m.id}>
              {m.name} ({m.code}
              {m.grade ? `, ${m.grade}` : ''}) ·{' '}
              {m.irNotSuitable
                ? 'identity by IR not suitable (tested by the replacing test)'
                : `method v${m.methodVersion}`}
            </option>
          ))}
        </Select>
      </Field>
      <Field
        id="lot-supplier"
        label="Supplier (approved source)"
        error={errors.supplierId}
        hint={
          source
            ? `${SOURCE_STATUS_LABELS[source.current.status]}. Sampling: ${
                SAMPLING_PLAN_LABELS[
                  source.current.status === 'qualified' ? source.current.samplingPlan : 'every-container'
                ]
              }.${source.current.conditions ? ` Conditions: ${source.current.conditions}` : ''}`
            : 'Only sources QA approved for this grade. A blocked source cannot be received.'
        }
      >
        <Select
          id="lot-supplier"
          bench
          value={v.sourceId}
          onChange={set('sourceId')}
          disabled={!v.materialId || !sources.data}
        >
          <option value="">{v.materialId ? 'Choose the supplier' : 'Choose the grade first'}</option>
          {sources.data?.map((s) => (
            <option key={s.id} value={s.id} disabled={s.current.status === 'blocked'}>
              {s.supplier.name}
              {s.manufacturer ? ` (made by ${s.manufacturer.name})` : ''} · {s.current.status}
              {s.current.status === 'blocked' ? ': receipt refused' : ''}
            </option>
          ))}
        </Select>
      </Field>
      <Field id="lot-supplier-lot" label="Supplier's lot number" error={errors.supplierLot}>
        <Input id="lot-supplier-lot" bench value={v.supplierLot} onChange={set('supplierLot')} autoComplete="off" />
      </Field>
      <Field
        id="lot-count"
        label="Number of containers"
        error={errors.containerCount}
        hint={`1 to ${MAX_CONTAINERS}; every container gets a label; the source's sampling plan says which are sampled and tested.`}
      >
        <Input id="lot-count" bench inputMode="numeric" value={v.containerCount} onChange={set('containerCount')} />
      </Field>
      <Field id="lot-date" label="Received on" error={errors.receivedDate}>
        <Input id="lot-date" bench type="date" max={today()} value={v.receivedDate} onChange={set('receivedDate')} />
      </Field>
      <Field id="lot-notes" label="Notes (optional)" className="md:col-span-2">
        <Textarea
          id="lot-notes"
          value={v.notes}
          onChange={set('notes')}
          placeholder="e.g. seals intact, one drum dented"
        />
      </Field>
      {receive.isError && <ErrorNote error={receive.error} className="md:col-span-2" />}
      <div className="flex flex-wrap gap-2 md:col-span-2">
        <Button type="submit" size="bench" variant="primary" busy={receive.isPending}>
          Register lot and create labels
        </Button>
        <Button size="bench" onClick={onCancel}>
          Cancel
        </Button>
      </div>
    </form>
  );
}
