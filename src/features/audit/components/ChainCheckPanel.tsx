/** Runs the audit chain check and shows "intact" (events, last hash) or the first broken event and what is wrong. */
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { Verdict } from '../../../components/Verdict';
import { formatNumber } from '../../../lib/format';
import { useState } from 'react';
import type { ChainReport } from '../api';
import { useChainCheck, useFullCheckRun, useStartFullCheck } from '../api';

/** Where the check started: from the latest signed checkpoint (incremental) or from the first event. */
function Scope({ r }: { r: ChainReport }) {
  return (
    <p className="text-muted" data-testid="chain-scope">
      {r.checkpoint
        ? `Held against checkpoint ${r.checkpoint.file} (${formatNumber(r.checkpoint.eventCount)} events${
            r.checkpoint.timeStampedAt ? `, time-stamped ${new Date(r.checkpoint.timeStampedAt).toISOString()}` : ''
          }); `
        : 'No checkpoint yet; '}
      {r.mode === 'incremental'
        ? `events from ${formatNumber(r.checkedFrom ?? 1)} on were re-hashed. The full check re-hashes every event.`
        : `every event was re-hashed${r.checkpointsCompared !== undefined ? ` and ${r.checkpointsCompared} checkpoint(s) compared` : ''}.`}
      {r.keyedFrom ? ` Keyed chain (HMAC) from event ${formatNumber(r.keyedFrom)}.` : ''}
    </p>
  );
}

function FullCheck() {
  const [runId, setRunId] = useState<number | null>(null);
  const start = useStartFullCheck();
  const run = useFullCheckRun(runId);
  const r = run.data;
  return (
    <div className="mt-4 flex flex-col gap-2 border-t border-line pt-3 text-sm" data-testid="full-chain-check">
      <div className="flex flex-wrap items-center gap-3">
        <Button
          onClick={() => start.mutate(undefined, { onSuccess: (x) => setRunId(x.id) })}
          busy={start.isPending}
          disabled={!!r && (r.status === 'queued' || r.status === 'running')}
        >
          Run the full check
        </Button>
        <span className="text-muted">Every event and every checkpoint, in the background.</span>
      </div>
      {start.isError && <ErrorNote error={start.error} />}
      {r && (
        <p role="status">
          {r.status === 'queued' && 'Waiting for the background job…'}
          {r.status === 'running' && `Running: ${formatNumber(r.checked)} of ${formatNumber(r.total)} events checked.`}
          {r.status === 'failed' && `The full check stopped: ${r.error ?? 'unknown error'}.`}
          {r.status === 'finished' &&
            r.result &&
            (r.result.ok
              ? `Full check: intact, ${formatNumber(r.result.events)} events and ${r.result.checkpointsCompared ?? 0} checkpoint(s).`
              : `Full check: broken at event ${r.result.brokenAt}: ${r.result.problem}.`)}
        </p>
      )}
    </div>
  );
}

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
            Recomputes the hash of each event after the latest signed checkpoint and its link to the one before, and
            holds the chain against that checkpoint; reports the first event that does not fit.
          </p>
        </div>
        <Button variant="primary" onClick={() => void check.refetch()} busy={check.isFetching}>
          {r ? 'Check again' : 'Check the chain'}
        </Button>
      </div>
      {check.isFetching && (
        <p className="mt-3 text-sm text-muted" role="status">
          Checking the events since the latest checkpoint…
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
          <Scope r={r} />
          <p className="text-xs text-muted">
            Checked <DateTime value={new Date(check.dataUpdatedAt)} seconds />.
          </p>
        </div>
      )}
      <FullCheck />
    </section>
  );
}
