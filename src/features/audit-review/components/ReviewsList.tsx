/** Recorded audit-trail reviews with their signature and PDF, and whether the next one is due. */
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { downloadUrl } from '../../../lib/api';
import { useReviewDue, useReviews } from '../api';

const LINK = 'inline-flex min-h-11 items-center font-medium text-petrol underline underline-offset-2';

export function ReviewDueNote() {
  const q = useReviewDue();
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  return (
    <p className={`text-sm ${q.data.due ? 'font-medium text-amber-ink' : 'text-muted'}`} data-testid="review-due">
      {q.data.due ? '⚠ ' : '✓ '}
      {q.data.text}
    </p>
  );
}

export function ReviewsList() {
  const q = useReviews();
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  if (q.data.length === 0) return <p className="text-sm text-muted">No audit-trail review is on record yet.</p>;
  return (
    <ul className="divide-y divide-line rounded-md border border-line bg-white">
      {q.data.map((r) => {
        const s = r.signatures.find((x) => x.meaning === 'audit-trail-reviewed');
        return (
          <li key={r.id} className="flex flex-col gap-1 px-3 py-2 text-sm" data-testid="audit-review">
            <div className="flex flex-wrap items-center gap-x-4">
              <span className="font-medium">{r.number}</span>
              <span>
                {r.from} to {r.to}
              </span>
              <span>
                {s ? (
                  <>
                    signed by {s.printedName}, <DateTime value={s.signedAt} />, audit trail reviewed
                  </>
                ) : (
                  'signature missing'
                )}
              </span>
              <a className={LINK} href={downloadUrl(`/api/audit-reviews/${r.id}/pdf`)} download>
                PDF
              </a>
            </div>
            <div className="text-muted">{r.exceptions.lists.map((l) => `${l.label}: ${l.count}`).join(' · ')}</div>
            <div>Findings: {r.findings}</div>
            <div>Actions: {r.actions}</div>
          </li>
        );
      })}
    </ul>
  );
}
