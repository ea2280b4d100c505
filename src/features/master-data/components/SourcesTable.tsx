/**
 * QA's sources of each material (desk screen): supplier, manufacturer, current qualification
 * status with its sampling plan, conditions and review date; a status change is signed, with the
 * reason; a reduced plan needs QA's validation justification (the server refuses it otherwise).
 */
import { Fragment, useState } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, Select, Textarea } from '../../../components/Field';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import {
  SAMPLING_PLAN_LABELS,
  SAMPLING_PLANS,
  SOURCE_STATUS_LABELS,
  SOURCE_STATUSES,
  useSetSourceStatus,
  useSources,
  type SourceRecord,
} from '../api';

type Status = (typeof SOURCE_STATUSES)[number];
type Plan = (typeof SAMPLING_PLANS)[number];

function StatusForm({
  source,
  me,
  onDone,
}: {
  source: SourceRecord;
  me: { fullName: string; signedOnce: boolean };
  onDone: () => void;
}) {
  const set = useSetSourceStatus();
  const [status, setStatus] = useState<Status>(source.current.status);
  const [plan, setPlan] = useState<Plan>(source.current.samplingPlan);
  const [justification, setJustification] = useState(source.current.samplingJustification ?? '');
  const [conditions, setConditions] = useState(source.current.conditions ?? '');
  const [from, setFrom] = useState(new Date().toISOString().slice(0, 10));
  const [reviewBy, setReviewBy] = useState(source.current.reviewBy ?? '');
  const [signing, setSigning] = useState(false);
  return (
    <div
      className="grid gap-2 rounded-md border border-line p-3 md:grid-cols-3"
      data-testid={`source-form-${source.id}`}
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
      <Field id={`from-${source.id}`} label="Effective from">
        <Input id={`from-${source.id}`} type="date" value={from} onChange={(e) => setFrom(e.target.value)} />
      </Field>
      <Field id={`review-${source.id}`} label="Review by (optional)">
        <Input id={`review-${source.id}`} type="date" value={reviewBy} onChange={(e) => setReviewBy(e.target.value)} />
      </Field>
      <Field id={`cond-${source.id}`} label="Conditions (for a conditional source)" className="md:col-span-2">
        <Textarea
          id={`cond-${source.id}`}
          rows={2}
          value={conditions}
          onChange={(e) => setConditions(e.target.value)}
        />
      </Field>
      {plan !== 'every-container' && (
        <Field id={`just-${source.id}`} label="Validation justification of the reduced plan" className="md:col-span-3">
          <Textarea
            id={`just-${source.id}`}
            rows={2}
            value={justification}
            onChange={(e) => setJustification(e.target.value)}
          />
        </Field>
      )}
      <div className="flex gap-2 md:col-span-3">
        <Button size="desk" variant="primary" onClick={() => setSigning(true)}>
          Sign status change…
        </Button>
        <Button size="desk" variant="quiet" onClick={onDone}>
          Cancel
        </Button>
      </div>
      <ReasonSignatureDialog
        open={signing}
        title="Sign the qualification status"
        meaningText={`set the status of ${source.supplier.name} for ${source.material.name} to "${status}"`}
        printedName={me.fullName}
        needsUsername={!me.signedOnce}
        confirmLabel="Sign status"
        reason={{ label: 'Reason', minLength: 3, tooShort: 'Give the reason for the change.' }}
        busy={set.isPending}
        error={set.error}
        onCancel={() => {
          setSigning(false);
          set.reset();
        }}
        onSign={(signature, reason) =>
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
            {
              onSuccess: () => {
                setSigning(false);
                onDone();
              },
            },
          )
        }
      />
    </div>
  );
}

export function SourcesTable({ me, canEdit }: { me: { fullName: string; signedOnce: boolean }; canEdit: boolean }) {
  const q = useSources();
  const [editing, setEditing] = useState<number | null>(null);
  if (q.isPending) return <p className="text-sm text-muted">Loading sources…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  if (q.data.length === 0) return <p className="text-sm text-muted">No approved source yet.</p>;
  return (
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
        {q.data.map((s) => (
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
  );
}
