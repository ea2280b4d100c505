/** Work-queue widget: instruments whose check is due (no passing, unexpired check). */
import { Link } from 'react-router-dom';
import { ErrorNote } from '../../../components/ErrorNote';
import { CHECK_TYPE_LABELS, useImpactAssessments, useInstruments } from '../api';
import { CheckStatus } from './CheckStatus';

export function CheckDueList() {
  const q = useInstruments();
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const due = q.data.filter((i) => i.active && i.checkDue);
  if (due.length === 0)
    return <p className="text-sm text-muted">Every instrument in use has a valid instrument check.</p>;
  return (
    <ul className="divide-y divide-line rounded-md border border-line bg-white">
      {due.map((i) => (
        <li key={i.id} className="flex flex-wrap items-center gap-x-4 gap-y-1 px-3 py-2 text-sm">
          <Link
            to={`/instruments/${i.id}`}
            className="inline-flex min-h-11 items-center font-medium text-petrol underline underline-offset-2"
          >
            {i.name}
          </Link>
          <CheckStatus instrument={i} />
          <span className="text-muted">{i.location}</span>
        </li>
      ))}
    </ul>
  );
}

/** Work-queue widget (QA): impact assessments of failed checks still awaiting a decision. */
export function OpenImpactAssessmentsList() {
  const q = useImpactAssessments();
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const open = q.data.filter((a) => a.status === 'open');
  if (open.length === 0) return <p className="text-sm text-muted">No failed check awaits an impact assessment.</p>;
  return (
    <ul className="divide-y divide-line rounded-md border border-line bg-white" data-testid="wq-impact-assessments">
      {open.map((a) => (
        <li key={a.id} className="flex flex-wrap items-center gap-x-4 gap-y-1 px-3 py-2 text-sm">
          <Link
            to={`/instruments/${a.instrumentId}`}
            className="inline-flex min-h-11 items-center font-medium text-petrol underline underline-offset-2"
          >
            {a.instrumentName}
          </Link>
          <span className="text-muted">
            {CHECK_TYPE_LABELS[a.checkType]} check failed; {a.measurements.length} measurement
            {a.measurements.length === 1 ? '' : 's'} to assess
          </span>
        </li>
      ))}
    </ul>
  );
}
