/** Search by lot, material and issue date; applies on submit (Enter) so typing stays quick. */
import { useState, type FormEvent } from 'react';
import { Button } from '../../../components/Button';
import { Field, Input } from '../../../components/Field';
import type { CertificateFilter } from '../api';

export function CertificateSearchForm({
  initial,
  onSearch,
}: {
  initial: CertificateFilter;
  onSearch: (f: CertificateFilter) => void;
}) {
  const [f, setF] = useState<CertificateFilter>(initial);
  const set = (k: keyof CertificateFilter) => (e: { target: { value: string } }) =>
    setF((p) => ({ ...p, [k]: e.target.value }));
  const submit = (e: FormEvent) => {
    e.preventDefault();
    const clean: CertificateFilter = {};
    for (const [k, v] of Object.entries(f))
      if (typeof v === 'string' && v.trim()) (clean as Record<string, string>)[k] = v.trim();
    onSearch(clean);
  };
  return (
    <form
      onSubmit={submit}
      className="mb-4 flex flex-wrap items-end gap-3 rounded-md border border-line bg-white p-3"
      role="search"
      aria-label="Search certificates"
    >
      <Field id="cert-lot" label="Lot" className="w-48">
        <Input id="cert-lot" value={f.lot ?? ''} onChange={set('lot')} placeholder="e.g. RM-2026-00042" />
      </Field>
      <Field id="cert-material" label="Material" className="w-56">
        <Input id="cert-material" value={f.material ?? ''} onChange={set('material')} placeholder="name or code" />
      </Field>
      <Field id="cert-number" label="Certificate number" className="w-44">
        <Input id="cert-number" value={f.number ?? ''} onChange={set('number')} placeholder="IC-2026-00042" />
      </Field>
      <Field id="cert-from" label="Issued from" className="w-40">
        <Input id="cert-from" type="date" value={f.from ?? ''} onChange={set('from')} />
      </Field>
      <Field id="cert-to" label="Issued until" className="w-40">
        <Input id="cert-to" type="date" value={f.to ?? ''} onChange={set('to')} />
      </Field>
      <div className="flex gap-2">
        <Button type="submit" variant="primary">
          Search
        </Button>
        <Button
          type="button"
          variant="quiet"
          onClick={() => {
            setF({});
            onSearch({});
          }}
        >
          Clear
        </Button>
      </div>
    </form>
  );
}
