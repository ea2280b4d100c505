/**
 * The trail's filters: site days (from, to - both whole days in the site's time zone), user, action
 * (exact, or its beginning followed by *), record type and id, text in the reason.
 */
import { useEffect, useMemo, useState, type FormEvent } from 'react';
import { Button } from '../../../components/Button';
import { Field, Input, Select } from '../../../components/Field';
import { useAuditFacets } from '../api';
import { actionWords, recordTypeLabel } from './labels';

export interface FilterForm {
  fromDay: string;
  toDay: string;
  actorId: string;
  action: string;
  entityType: string;
  entityId: string;
  q: string;
}

export const EMPTY_FILTER: FilterForm = {
  fromDay: '',
  toDay: '',
  actorId: '',
  action: '',
  entityType: '',
  entityId: '',
  q: '',
};

const ACTION_RE = /^[a-z0-9][a-z0-9._-]*\*?$/i;

export function AuditFilters({
  value,
  onApply,
  timeZone,
  accountsOnly,
}: {
  value: FilterForm;
  onApply: (f: FilterForm) => void;
  timeZone: string;
  accountsOnly: boolean;
}) {
  const [f, setF] = useState<FilterForm>(value);
  useEffect(() => setF(value), [value]);
  const facets = useAuditFacets();
  const set = (k: keyof FilterForm) => (e: { target: { value: string } }) =>
    setF((x) => ({ ...x, [k]: e.target.value }));
  const actionChoices = useMemo(() => {
    const a = facets.data?.actions ?? [];
    const groups = [...new Set(a.map((x) => x.split('.')[0]))].map((g) => `${g}.*`);
    return [...groups, ...a];
  }, [facets.data]);
  const actionError =
    f.action.trim() && !ACTION_RE.test(f.action.trim())
      ? 'Give an action name, or its beginning followed by * (for example lot.*).'
      : undefined;
  const rangeError =
    f.fromDay && f.toDay && f.fromDay > f.toDay ? 'The first day must not be after the last day.' : undefined;

  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (actionError || rangeError) return;
    onApply({ ...f, action: f.action.trim(), entityId: f.entityId.trim(), q: f.q.trim() });
  };

  return (
    <form onSubmit={submit} className="rounded-md border border-line bg-white p-4" aria-label="Filter the audit trail">
      <div className="grid gap-3 sm:grid-cols-2 lg:grid-cols-4 xl:grid-cols-7">
        <Field id="af-from" label="From day" hint={`00:00 ${timeZone}`}>
          <Input id="af-from" type="date" value={f.fromDay} onChange={set('fromDay')} />
        </Field>
        <Field id="af-to" label="To day" hint="including that day" error={rangeError}>
          <Input id="af-to" type="date" value={f.toDay} onChange={set('toDay')} invalid={!!rangeError} />
        </Field>
        <Field id="af-user" label="User">
          <Select id="af-user" value={f.actorId} onChange={set('actorId')}>
            <option value="">Anyone</option>
            {(facets.data?.actors ?? []).map((a) => (
              <option key={a.id} value={String(a.id)}>
                {a.name}
              </option>
            ))}
          </Select>
        </Field>
        <Field id="af-action" label="Action" hint="exact, or lot.* for all lot actions" error={actionError}>
          <Input
            id="af-action"
            list="af-action-list"
            value={f.action}
            onChange={set('action')}
            invalid={!!actionError}
            autoComplete="off"
            spellCheck={false}
          />
          <datalist id="af-action-list">
            {actionChoices.map((a) => (
              <option key={a} value={a} label={a.endsWith('*') ? a : `${actionWords(a)} (${a})`} />
            ))}
          </datalist>
        </Field>
        <Field id="af-type" label="Record type">
          <Select id="af-type" value={f.entityType} onChange={set('entityType')} disabled={accountsOnly}>
            <option value="">{accountsOnly ? 'Accounts' : 'Any'}</option>
            {(facets.data?.entityTypes ?? []).map((t) => (
              <option key={t} value={t}>
                {recordTypeLabel(t)}
              </option>
            ))}
          </Select>
        </Field>
        <Field id="af-id" label="Record id">
          <Input id="af-id" value={f.entityId} onChange={set('entityId')} autoComplete="off" />
        </Field>
        <Field id="af-q" label="Reason contains">
          <Input id="af-q" type="search" value={f.q} onChange={set('q')} autoComplete="off" />
        </Field>
      </div>
      <div className="mt-3 flex flex-wrap gap-2">
        <Button type="submit" variant="primary">
          Apply filter
        </Button>
        <Button
          onClick={() => {
            setF(EMPTY_FILTER);
            onApply(EMPTY_FILTER);
          }}
        >
          Clear
        </Button>
      </div>
    </form>
  );
}
