/** Work-queue widget: instruments whose check is due (no passing, unexpired check). */
import { Link } from 'react-router-dom';
import { ErrorNote } from '../../../components/ErrorNote';
import { useInstruments } from '../api';
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
