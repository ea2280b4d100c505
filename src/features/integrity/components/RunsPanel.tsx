/** The integrity sweeps: ask for one now (auditor or QA), and each run's progress and findings. */
import { useEffect } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { Button } from '../../../components/Button';
import { qk } from '../../../lib/query-keys';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { QueryState } from '../../../components/QueryState';
import { useRequestSweep, useRuns } from '../api';

export function RunsPanel() {
  const runs = useRuns();
  const ask = useRequestSweep();
  const busy = (runs.data ?? []).some((r) => r.status === 'queued' || r.status === 'running');
  // a sweep that finished may have raised alerts: the alert lists are asked again
  const finished = (runs.data ?? []).filter((r) => r.status === 'finished').length;
  const qc = useQueryClient();
  useEffect(() => {
    void qc.invalidateQueries({ queryKey: qk.integrity.alertsAll });
  }, [finished, qc]);
  return (
    <section aria-labelledby="runs" className="flex flex-col gap-3">
      <div className="flex flex-wrap items-center justify-between gap-2">
        <h2 id="runs" className="text-lg">
          Integrity sweeps
        </h2>
        <Button variant="primary" busy={ask.isPending} disabled={busy} onClick={() => ask.mutate()}>
          {busy ? 'A sweep is running' : 'Run the integrity sweep now'}
        </Button>
      </div>
      <p className="text-sm text-muted">
        A sweep re-hashes every stored raw file and certificate, rebuilds the content of every signed record and
        compares it with its signature, and compares every account&apos;s roles with its role grants. It also runs by
        itself once a day.
      </p>
      {ask.isError && <ErrorNote error={ask.error} />}
      <QueryState
        query={runs}
        loading={<p className="text-sm text-muted">Loading…</p>}
        empty={<p className="text-sm text-muted">No sweep has run yet.</p>}
      >
        {(data) => (
          <table className="w-full text-sm" aria-label="Integrity sweeps">
            <thead>
              <tr className="text-left text-muted">
                <th data-key-column="asked" className="py-1 pr-3 font-medium">
                  Asked
                </th>
                <th className="py-1 pr-3 font-medium">By</th>
                <th data-key-column="state" className="py-1 pr-3 font-medium">
                  State
                </th>
                <th className="py-1 pr-3 font-medium">Files</th>
                <th className="py-1 pr-3 font-medium">Signatures</th>
                <th className="py-1 pr-3 font-medium">Certificates, accounts</th>
                <th data-key-column="mismatches" className="py-1 pr-3 font-medium">
                  Mismatches
                </th>
              </tr>
            </thead>
            <tbody>
              {data.map((r) => (
                <tr key={r.id} className="border-t border-line" data-testid="integrity-run">
                  <td className="py-1 pr-3">
                    <DateTime value={r.requestedAt} />
                  </td>
                  <td className="py-1 pr-3">{r.origin === 'schedule' ? 'daily schedule' : r.requestedBy}</td>
                  <td className="py-1 pr-3">{r.status === 'failed' ? `failed: ${r.error ?? ''}` : r.status}</td>
                  <td className="py-1 pr-3 tabular-nums">
                    {r.filesChecked} / {r.filesTotal}
                  </td>
                  <td className="py-1 pr-3 tabular-nums">
                    {r.signaturesChecked} / {r.signaturesTotal}
                    {Object.keys(r.unchecked).length > 0 && (
                      <span className="text-muted">
                        {' '}
                        (not checkable:{' '}
                        {Object.entries(r.unchecked)
                          .map(([k, n]) => `${k} ${n}`)
                          .join(', ')}
                        )
                      </span>
                    )}
                  </td>
                  <td className="py-1 pr-3 tabular-nums">
                    {r.certificatesChecked}, {r.accountsChecked}
                  </td>
                  <td className={`py-1 pr-3 tabular-nums ${r.mismatches ? 'font-medium text-fail' : ''}`}>
                    {r.mismatches}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        )}
      </QueryState>
    </section>
  );
}
