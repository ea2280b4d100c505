/**
 * Review by exception: the top of a test's review page lists what is unusual (fed by its own
 * route, GET /api/tests/:id/exceptions). The full list of every measurement stays below it on
 * the page, and the verifier still signs for all of them.
 */
import { ErrorNote } from '../../../components/ErrorNote';
import { Panel } from '../../../components/Panel';
import { EXCEPTION_LABELS, useReviewExceptions } from '../api';

export function ReviewExceptions({ testId }: { testId: number }) {
  const q = useReviewExceptions(testId);
  if (q.isPending) return <p className="text-sm text-muted">Looking for exceptions…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const d = q.data;
  return (
    <Panel
      id="exceptions-title"
      title={d.exceptions.length ? `⚠ ${d.exceptions.length} thing(s) to look at first` : '✓ Nothing unusual found'}
      className="mb-4 flex flex-col gap-2 p-4"
      titleClassName="text-lg"
      testId="review-exceptions"
    >
      {d.exceptions.length > 0 && (
        <ul className="flex list-none flex-col gap-1 p-0 text-sm">
          {d.exceptions.map((e, i) => (
            <li key={`${e.kind}-${e.measurementId}-${i}`} className="flex flex-wrap gap-x-2">
              <span className="font-medium text-amber-ink">{EXCEPTION_LABELS[e.kind]}:</span>
              <span>{e.text}</span>
            </li>
          ))}
        </ul>
      )}
      <p className="text-sm text-muted">
        {d.plainContainers} of {d.containers} measured container(s) show nothing unusual; their details are in the full
        list below. Every measurement stays listed, and your signature covers all of them. {d.caution}
      </p>
    </Panel>
  );
}
