/**
 * QA's sources of each material (desk screen): supplier, manufacturer, current qualification
 * status with its sampling plan, conditions and review date; a status change is signed, with the
 * reason; a reduced plan needs QA's validation justification (the server refuses it otherwise).
 */
import { Fragment, useState } from 'react';
import { Button } from '../../../components/Button';
import { Field, InputField, Select, TextareaField } from '../../../components/Field';
import { QueryState } from '../../../components/QueryState';
import {
  SAMPLING_PLAN_LABELS,
  SAMPLING_PLANS,
  SOURCE_STATUS_LABELS,
  SOURCE_STATUSES,
  useSetSourceStatus,
  useSources,
  type SourceRecord,
} from '../api';
import { SignedChangeForm, type Me } from './SignedChangeForm';

type Status = (typeof SOURCE_STATUSES)[number];
type Plan = (typeof SAMPLING_PLANS)[number];

function StatusForm({ source, me, onDone }: { source: SourceRecord; me: Me; onDone: () => void }) {
  const set = useSetSourceStatus();
  const [status, setStatus] = useState<Status>(source.current.status);
  const [plan, setPlan] = useState<Plan>(source.current.samplingPlan);
  const [justification, setJustification] = useState(source.current.samplingJustification ?? '');
  const [conditions, setConditions] = useState(source.current.conditions ?? '');
  const [from, setFrom] = useState(new Date().toISOString().slice(0, 10));
  const [reviewBy, setReviewBy] = useState(source.current.reviewBy ?? '');
  return (
    <SignedChangeForm
      testId={`source-form-${source.id}`}
      me={me}
      onDone={onDone}
      openLabel="Sign status change…"
      title="Sign the qualification status"
      meaningText={`set the status of ${source.supplier.name} for ${source.material.name} to "${status}"`}
      confirmLabel="Sign status"
      mutation={set}
      send={(signature, reason, stored) =>
        set.mutate(
          {
            sourceId: source.id,
            body: {
              status,
              samplingPlan: plan,
              samplingJustification: plan === 'every-container' ? null : justification.trim() || null,
              conditions: conditions.trim() || null,
              effectiveFrom: from,
              reviewBy: reviewBy || null,
              reason,
              signature,
            },
          },
          { onSuccess: stored },
        )
      }
    >
      <Field id={`st-${source.id}`} label="Status">
        <Select id={`st-${source.id}`} value={status} onChange={(e) => setStatus(e.target.value as Status)}>
          {SOURCE_STATUSES.map((s) => (
            <option key={s} value={s}>
              {SOURCE_STATUS_LABELS[s]}
            </option>
          ))}
        </Select>
      </Field>
      <Field id={`plan-${source.id}`} label="Sampling plan">
        <Select id={`plan-${source.id}`} value={plan} onChange={(e) => setPlan(e.target.value as Plan)}>
          {SAMPLING_PLANS.map((p) => (
            <option key={p} value={p}>
              {SAMPLING_PLAN_LABELS[p]}
            </option>
          ))}
        </Select>
      </Field>
      <InputField
        id={`from-${source.id}`}
        label="Effective from"
        type="date"
        value={from}
        onChange={(e) => setFrom(e.target.value)}
      />
      <InputField
        id={`review-${source.id}`}
        label="Review by (optional)"
        type="date"
        value={reviewBy}
        onChange={(e) => setReviewBy(e.target.value)}
      />
      <TextareaField
        id={`cond-${source.id}`}
        label="Conditions (for a conditional source)"
        fieldClassName="md:col-span-2"
        rows={2}
        value={conditions}
        onChange={(e) => setConditions(e.target.value)}
      />
      {plan !== 'every-container' && (
        <TextareaField
          id={`just-${source.id}`}
          label="Validation justification of the reduced plan"
          fieldClassName="md:col-span-3"
          rows={2}
          value={justification}
          onChange={(e) => setJustification(e.target.value)}
        />
      )}
    </SignedChangeForm>
  );
}

export function SourcesTable({ me, canEdit }: { me: Me; canEdit: boolean }) {
  const q = useSources();
  const [editing, setEditing] = useState<number | null>(null);
  return (
    <QueryState
      query={q}
      loading={<p className="text-sm text-muted">Loading sources…</p>}
      empty={<p className="text-sm text-muted">No approved source yet.</p>}
    >
      {(sources) => (
        <table className="w-full text-sm">
          <thead>
            <tr className="text-left text-muted">
              <th className="py-1" data-key-column="material">
                Material
              </th>
              <th data-key-column="supplier">Supplier</th>
              <th>Manufacturer</th>
              <th data-key-column="status">Status</th>
              <th>Sampling plan</th>
              <th>Review by</th>
            </tr>
          </thead>
          <tbody>
            {sources.map((s) => (
              <Fragment key={s.id}>
                <tr className="border-t border-line align-top" data-testid={`source-${s.id}`}>
                  <td className="py-1">{s.material.name}</td>
                  <td>{s.supplier.name}</td>
                  <td>{s.manufacturer?.name ?? '—'}</td>
                  <td>
                    <span className="font-semibold">{SOURCE_STATUS_LABELS[s.current.status]}</span>
                    {s.current.conditions && <div className="text-muted">Conditions: {s.current.conditions}</div>}
                    <div className="text-muted">
                      since {s.current.effectiveFrom} · {s.current.setBy?.name ?? 'migration'} · {s.history.length}{' '}
                      change(s)
                    </div>
                  </td>
                  <td>{SAMPLING_PLAN_LABELS[s.current.samplingPlan]}</td>
                  <td>
                    {s.current.reviewBy ?? '—'}
                    {canEdit && editing !== s.id && (
                      <div className="mt-1">
                        <Button size="desk" onClick={() => setEditing(s.id)}>
                          Change status…
                        </Button>
                      </div>
                    )}
                  </td>
                </tr>
                {editing === s.id && (
                  <tr>
                    <td colSpan={6} className="py-2">
                      <StatusForm source={s} me={me} onDone={() => setEditing(null)} />
                    </td>
                  </tr>
                )}
              </Fragment>
            ))}
          </tbody>
        </table>
      )}
    </QueryState>
  );
}
