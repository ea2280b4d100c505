/** One control chart with what it is drawn from: limits and their basis, the run-rule hits, CSV download. */
import { ErrorNote } from '../../../components/ErrorNote';
import { DateTime } from '../../../components/DateTime';
import { downloadUrl } from '../../../lib/api';
import { buttonClass } from '../../../components/Button';
import { chartPath, METRIC_LABELS, useChart, type ChartFilter } from '../api';
import { ControlChart } from './ControlChart';
import { SignalRow } from './Signals';

export function ChartPanel({ filter }: { filter: ChartFilter }) {
  const q = useChart(filter);
  if (filter.scope !== 'all' && !filter.value) return <p className="text-sm text-muted">Choose what to filter by.</p>;
  if (q.isPending) return <p className="text-sm text-muted">Loading the chart…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const c = q.data;
  const m = METRIC_LABELS[c.metric];
  const f = (v: number) => `${v.toFixed(m.digits)}${m.unit ? ` ${m.unit}` : ''}`;
  const byId = new Map(c.points.map((p, i) => [p.measurementId, { ...p, n: i + 1 }]));
  return (
    <section aria-labelledby="chart-title" className="flex flex-col gap-3">
      <div className="flex flex-wrap items-end justify-between gap-2">
        <div>
          <h2 id="chart-title" className="text-lg">
            {m.title}: {c.materialName}, method version {c.methodVersion}
          </h2>
          <p className="text-sm text-muted">
            {c.scopeLabel} · {c.points.length} passed result(s) of verified tests
          </p>
        </div>
        <a className={buttonClass('secondary')} href={downloadUrl(chartPath(filter, true))} download>
          Download CSV
        </a>
      </div>
      <p className="rounded-md border border-line bg-amber-soft px-3 py-2 text-sm text-amber-ink" role="note">
        {c.caution}
      </p>
      {c.limits ? (
        <p className="text-sm">
          Centre {f(c.limits.centre)}; control limits {f(c.limits.lcl)} to {f(c.limits.ucl)}; moving-range limit{' '}
          {f(c.limits.mrUcl)}. Limits from: {c.limits.basis}.
        </p>
      ) : (
        <p className="text-sm">
          Fewer than {c.minPoints} points: no control limits yet and no signal. The chart shows the results so far.
        </p>
      )}
      <ControlChart chart={c} />
      <h3 className="text-base font-medium">Run-rule hits on this chart</h3>
      {c.hits.length === 0 ? (
        <p className="text-sm text-muted">No run rule fired on this chart.</p>
      ) : (
        <table className="w-full text-sm" data-testid="rule-hits">
          <thead>
            <tr className="text-left">
              <th className="py-1 pr-3">Point</th>
              <th className="py-1 pr-3">Container</th>
              <th className="py-1 pr-3">Recorded</th>
              <th className="py-1 pr-3">Rule</th>
              <th className="py-1">Source of the rule</th>
            </tr>
          </thead>
          <tbody>
            {c.hits.map((h, i) => {
              const p = byId.get(h.measurementId);
              return (
                <tr key={`${h.rule}-${h.measurementId}-${i}`} className="border-t border-line">
                  <td className="py-1 pr-3 tabular-nums">◇ {p?.n}</td>
                  <td className="py-1 pr-3">{p?.container}</td>
                  <td className="py-1 pr-3">{p && <DateTime value={p.at} />}</td>
                  <td className="py-1 pr-3">{h.text}</td>
                  <td className="py-1 text-muted">{h.source}</td>
                </tr>
              );
            })}
          </tbody>
        </table>
      )}
      {c.signals.length > 0 && (
        <>
          <h3 className="text-base font-medium">Signals raised on this chart</h3>
          <ul className="divide-y divide-line rounded-md border border-line bg-white">
            {c.signals.map((s) => (
              <SignalRow key={s.id} s={s} />
            ))}
          </ul>
        </>
      )}
    </section>
  );
}
