/** QA's periodic review of the audit trail: the period, its exception lists, findings, actions, e-signature. */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { DateTime } from '../../../components/DateTime';
import { Field, Textarea } from '../../../components/Field';
import { PeriodFields } from '../../../components/PeriodFields';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { REVIEW_CATEGORIES, useExceptionLists, useRecordReview, type ReviewInput } from '../api';
import { mutationSigning } from '../../../lib/signing';
import { Panel } from '../../../components/Panel';

type Category = ReviewInput['scope'][number];

/** The previous calendar month (UTC days), the usual period of a monthly review. */
function previousMonth(): { from: string; to: string } {
  const now = new Date();
  const first = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth() - 1, 1));
  const last = new Date(Date.UTC(now.getUTCFullYear(), now.getUTCMonth(), 0));
  return { from: first.toISOString().slice(0, 10), to: last.toISOString().slice(0, 10) };
}

export function ReviewForm({ me }: { me: { fullName: string; signedOnce: boolean } }) {
  const initial = previousMonth();
  const [from, setFrom] = useState(initial.from);
  const [to, setTo] = useState(initial.to);
  const [scope, setScope] = useState<Category[]>([...REVIEW_CATEGORIES]);
  const [findings, setFindings] = useState('');
  const [actions, setActions] = useState('');
  const [error, setError] = useState<string | null>(null);
  const [signing, setSigning] = useState(false);
  const lists = useExceptionLists(from, to);
  const record = useRecordReview();
  return (
    <Panel id="new-review" title="Review a period" className="flex flex-col gap-3 p-4" titleClassName="text-lg">
      <PeriodFields ids={['review-from', 'review-to']} from={from} to={to} onFrom={setFrom} onTo={setTo} />
      {lists.isError && <ErrorNote error={lists.error} />}
      {lists.data && (
        <div className="flex flex-col gap-2">
          <p className="text-sm">{lists.data.totalEvents} GMP-relevant event(s) in the period. Exception lists:</p>
          {lists.data.lists.map((l) => (
            // The checkbox sits beside the summary, not in it: a control inside a summary is a
            // nested interactive element (WCAG 4.1.2, docs/accessibility.md).
            <div key={l.key} className="flex items-start gap-2 rounded border border-line px-3 py-1 text-sm">
              <input
                type="checkbox"
                className="mt-3.5"
                aria-label={`Reviewed: ${l.label}`}
                checked={scope.includes(l.key)}
                onChange={(e) => setScope((s) => (e.target.checked ? [...s, l.key] : s.filter((k) => k !== l.key)))}
              />
              <details className="min-w-0 flex-1">
                <summary className="flex min-h-11 cursor-pointer items-center gap-2">
                  <span className="font-medium">{l.label}</span>
                  <span className="tabular-nums text-muted">({l.count})</span>
                </summary>
                {l.events.length === 0 ? (
                  <p className="py-1 text-muted">None in this period.</p>
                ) : (
                  <ul className="py-1">
                    {l.events.map((e) => (
                      <li key={e.id} className="flex flex-wrap gap-x-3">
                        <span className="tabular-nums">#{e.id}</span>
                        <DateTime value={e.occurredAt} />
                        <span>{e.actorName}</span>
                        <span>{e.action}</span>
                        <span>{e.entity}</span>
                        {e.reason && <span className="text-muted">{e.reason}</span>}
                      </li>
                    ))}
                  </ul>
                )}
              </details>
            </div>
          ))}
        </div>
      )}
      <Field id="review-findings" label="Findings" hint='What the lists showed; "no findings" is a finding too.'>
        <Textarea id="review-findings" value={findings} onChange={(e) => setFindings(e.target.value)} />
      </Field>
      <Field
        id="review-actions"
        label="Actions"
        hint='What follows (deviation, training, access change), or "none".'
        error={error ?? undefined}
      >
        <Textarea id="review-actions" value={actions} onChange={(e) => setActions(e.target.value)} />
      </Field>
      <div>
        <Button
          variant="primary"
          onClick={() => {
            if (findings.trim().length < 10) return setError('Write the findings (at least 10 characters).');
            if (actions.trim().length < 4) return setError('Write the actions, or "none".');
            if (!scope.length) return setError('Tick at least one exception list you reviewed.');
            setError(null);
            setSigning(true);
          }}
        >
          Sign the review
        </Button>
        {record.isSuccess && (
          <span className="ml-3 text-sm text-pass" role="status">
            ✓ Review {record.data.number} recorded.
          </span>
        )}
      </div>
      <SignatureDialog
        open={signing}
        title={`Sign the audit-trail review of ${from} to ${to}`}
        meaningText="reviewed the audit trail of this period and recorded the findings and actions"
        record={`Audit trail ${from} to ${to}: ${scope.length} exception list(s)`}
        confirmLabel="Sign the review"
        {...mutationSigning(me, record, () => setSigning(false))}
        onSign={(signature) =>
          record.mutate(
            { from, to, scope, findings: findings.trim(), actions: actions.trim(), signature },
            {
              onSuccess: () => {
                setSigning(false);
                setFindings('');
                setActions('');
              },
            },
          )
        }
      />
    </Panel>
  );
}
