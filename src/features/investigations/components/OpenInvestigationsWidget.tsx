/** Work-queue widget of QA: open investigations and what each needs next. */
import { Link } from 'react-router-dom';
import { ErrorNote } from '../../../components/ErrorNote';
import { useInvestigations } from '../api';
import { statusText } from './InvestigationStatus';

export function OpenInvestigationsList() {
  const q = useInvestigations('open');
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const todo = q.data.filter((i) => i.status === 'open' || i.status === 'phase1-recorded');
  if (todo.length === 0) return <p className="text-sm text-muted">No investigation awaits QA.</p>;
  return (
    <ul className="divide-y divide-line rounded-md border border-line bg-white">
      {todo.map((i) => (
        <li key={i.id} className="flex flex-wrap items-center gap-x-4 gap-y-1 px-3 py-2 text-sm">
          <Link
            to={`/investigations/${i.id}`}
            className="inline-flex min-h-11 items-center font-medium text-petrol underline underline-offset-2"
          >
            {i.number}
          </Link>
          <span>
            Lot {i.lotNumber} · {i.materialName}
          </span>
          <span className="text-muted">{statusText(i)}</span>
        </li>
      ))}
    </ul>
  );
}
