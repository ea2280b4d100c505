/** Work-queue widget for QA: draft references awaiting approval that someone else uploaded. */
import { Link } from 'react-router-dom';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { useReferencesByStatus } from '../api';

export function AwaitingApprovalList({ myUserId }: { myUserId: number }) {
  const q = useReferencesByStatus('draft');
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const mine = q.data.filter((r) => r.createdBy === myUserId);
  const others = q.data.filter((r) => r.createdBy !== myUserId);
  if (q.data.length === 0) return <p className="text-sm text-muted">No reference spectra await approval.</p>;
  return (
    <div className="flex flex-col gap-2">
      {others.length === 0 ? (
        <p className="text-sm text-muted">No reference uploaded by someone else awaits your approval.</p>
      ) : (
        <ul className="divide-y divide-line rounded-md border border-line bg-white">
          {others.map((r) => (
            <li key={r.id} className="flex flex-wrap items-center gap-x-4 gap-y-1 px-3 py-2 text-sm">
              <Link to={`/library/references/${r.id}`} className="font-medium text-petrol underline underline-offset-2">
                {r.code}
              </Link>
              <span>
                {r.materialCode} {r.materialName}
              </span>
              <span className="text-muted">
                uploaded by {r.uploadedByName}, <DateTime value={r.createdAt} />
              </span>
            </li>
          ))}
        </ul>
      )}
      {mine.length > 0 && (
        <p className="text-sm text-muted">
          You uploaded {mine.length} draft reference(s); another QA manager must approve them.
        </p>
      )}
    </div>
  );
}
