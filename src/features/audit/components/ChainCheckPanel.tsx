/** Runs the audit chain check and shows "intact" (events, last hash) or the first broken event and what is wrong. */
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { Verdict } from '../../../components/Verdict';
import { formatNumber } from '../../../lib/format';
import { useChainCheck } from '../api';

export function ChainCheckPanel({ onShowEvent }: { onShowEvent?: (id: number) => void }) {
  const check = useChainCheck();
  const r = check.data;
  return (
    <section
      aria-labelledby="chain-check-title"
      className="rounded-md border border-line bg-white p-4"
      data-testid="chain-check"
    >
      <div className="flex flex-wrap items-center justify-between gap-3">
        <div>
          <h2 id="chain-check-title" className="text-lg">
            Chain check
          </h2>
          <p className="text-sm text-muted">
            Recomputes the hash of every event and its link to the one before; reports the first event that does not
            fit.
          </p>
        </div>
        <Button variant="primary" onClick={() => void check.refetch()} busy={check.isFetching}>
          {r ? 'Check again' : 'Check the chain'}
        </Button>
      </div>
      {check.isFetching && (
        <p className="mt-3 text-sm text-muted" role="status">
          Checking every event… this reads the whole trail and may take a while.
        </p>
      )}
      {check.isError && !check.isFetching && <ErrorNote className="mt-3" error={check.error} />}
      {r && !check.isFetching && (
        <div className="mt-3 flex flex-col gap-2 text-sm" role="status">
          {r.ok ? (
            <>
              <div className="flex flex-wrap items-center gap-3">
                <Verdict verdict="pass" label="Intact" />
                <span>
                  {formatNumber(r.events)} event{r.events === 1 ? '' : 's'}, each linked to the one before and
                  unaltered.
                </span>
              </div>
              <p>
                <span className="text-muted">Last event {r.lastId}, hash </span>
                <span className="font-mono text-xs break-all">{r.lastHash}</span>
              </p>
            </>
          ) : (
            <>
              <div className="flex flex-wrap items-center gap-3">
                <Verdict verdict="fail" label="Broken" />
                <span>
                  First broken event: <strong className="tabular-nums">{r.brokenAt}</strong> — {r.problem}.
                </span>
                {onShowEvent && (
                  <button
                    type="button"
                    onClick={() => onShowEvent(r.brokenAt)}
                    className="text-petrol underline underline-offset-2"
                  >
                    Show event {r.brokenAt}
                  </button>
                )}
              </div>
              <p className="text-muted">
                {formatNumber(r.events)} events before it check out. Report this to QA and the system administrator: the
                record was changed outside Drumline.
              </p>
              {r.expected && (
                <p>
                  <span className="text-muted">Expected </span>
                  <span className="font-mono text-xs break-all">{r.expected}</span>
                  <br />
                  <span className="text-muted">Found </span>
                  <span className="font-mono text-xs break-all">{r.found}</span>
                </p>
              )}
            </>
          )}
          <p className="text-xs text-muted">
            Checked <DateTime value={new Date(check.dataUpdatedAt)} seconds />.
          </p>
        </div>
      )}
    </section>
  );
}
