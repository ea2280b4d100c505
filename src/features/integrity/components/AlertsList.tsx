/** Integrity alerts as a list: what no longer matches, where it shows, when it was found, whether QA signed it off. */
import { Link } from 'react-router-dom';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { useAlerts, type IntegrityAlert } from '../api';

const LINK = 'inline-flex min-h-11 items-center font-medium text-petrol underline underline-offset-2';

export function AlertRow({ a }: { a: IntegrityAlert }) {
  return (
    <li className="flex flex-wrap items-center gap-x-4 gap-y-1 px-3 py-2 text-sm" data-testid="integrity-alert">
      <Link to={`/integrity/alerts/${a.id}`} className={LINK}>
        Alert {a.id}
      </Link>
      <span>{a.kindLabel}</span>
      <span>{a.records.map((r) => r.label).join('; ') || `${a.subjectType} ${a.subjectId}`}</span>
      <span className="text-muted">
        found <DateTime value={a.foundAt} /> (
        {a.foundIn === 'sweep' ? 'integrity sweep' : `${a.foundIn}, ${a.foundBy ?? ''}`})
      </span>
      <span className={a.signOff ? 'text-muted' : 'font-medium text-fail'}>
        {a.signOff ? `signed off by ${a.signOff.signedBy}` : 'open'}
      </span>
    </li>
  );
}

export function AlertsList({ status, empty }: { status: 'open' | 'all'; empty: string }) {
  const q = useAlerts(status);
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  if (q.data.length === 0) return <p className="text-sm text-muted">{empty}</p>;
  return (
    <ul className="divide-y divide-line rounded-md border border-line bg-white">
      {q.data.map((a) => (
        <AlertRow key={a.id} a={a} />
      ))}
    </ul>
  );
}
