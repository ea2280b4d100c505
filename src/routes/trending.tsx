/** Trends of passed identity results: control charts per material and method version, filters, signals, baseline. */
import { useState } from 'react';
import { useSearchParams } from 'react-router-dom';
import { useHasRole } from '../app/session';
import { Button } from '../components/Button';
import { ErrorNote } from '../components/ErrorNote';
import { Field, Select, Textarea } from '../components/Field';
import { PeriodFields } from '../components/PeriodFields';
import { PageHeader } from '../components/PageHeader';
import { errorMessage } from '../lib/api';
import {
  METRIC_LABELS,
  METRICS,
  SCOPE_LABELS,
  useFixBaseline,
  useScan,
  useTrendMethods,
  type Metric,
  type ScopeKind,
  type TrendMethodOption,
} from '../features/trending/api';
import { ChartPanel } from '../features/trending/components/ChartPanel';
import { SignalsList } from '../features/trending/components/Signals';

const SCOPES: ScopeKind[] = ['all', 'source', 'instrument', 'operator'];

function BaselineForm({ method }: { method: TrendMethodOption }) {
  const fix = useFixBaseline();
  const [from, setFrom] = useState('');
  const [to, setTo] = useState('');
  const [reason, setReason] = useState('');
  return (
    <section aria-labelledby="baseline" className="flex flex-col gap-3 rounded-md border border-line bg-white p-4">
      <h2 id="baseline" className="text-lg">
        Fix the baseline period
      </h2>
      <p className="text-sm text-muted">
        Until QA fixes a baseline, the limits come from the first 20 points. A baseline needs at least 20 passed results
        of {method.materialName} (method version {method.methodVersion}); it is audited and replaces the previous one
        for new limits.
      </p>
      <PeriodFields
        ids={['baseline-from', 'baseline-to']}
        labels={['First day', 'Last day']}
        from={from}
        to={to}
        onFrom={setFrom}
        onTo={setTo}
      />
      <Field
        id="baseline-reason"
        label="Why this period is a fair baseline"
        error={fix.error ? errorMessage(fix.error) : undefined}
      >
        <Textarea id="baseline-reason" value={reason} onChange={(e) => setReason(e.target.value)} />
      </Field>
      <div>
        <Button
          disabled={fix.isPending}
          onClick={() => fix.mutate({ methodId: method.methodId, from, to, reason: reason.trim() })}
        >
          Fix baseline
        </Button>
        {fix.isSuccess && <span className="ml-3 text-sm text-pass">✓ Baseline fixed.</span>}
      </div>
    </section>
  );
}

export default function TrendingPage() {
  const [params, setParams] = useSearchParams();
  const isQa = useHasRole('qa_manager');
  const methods = useTrendMethods();
  const scan = useScan();
  const list = methods.data ?? [];
  const methodId = Number(params.get('methodId')) || list[0]?.methodId || 0;
  const metric = (METRICS as readonly string[]).includes(params.get('metric') ?? '')
    ? (params.get('metric') as Metric)
    : 'correlation';
  const scope = (SCOPES as string[]).includes(params.get('scope') ?? '') ? (params.get('scope') as ScopeKind) : 'all';
  const value = params.get('value') ?? '';
  const method = list.find((m) => m.methodId === methodId);
  const set = (patch: Record<string, string>) => {
    const next = new URLSearchParams(params);
    for (const [k, v] of Object.entries(patch)) next.set(k, v);
    if (!next.get('methodId') && methodId) next.set('methodId', String(methodId));
    setParams(next, { replace: true });
  };
  const options =
    scope === 'source'
      ? method?.sources
      : scope === 'instrument'
        ? method?.instruments
        : scope === 'operator'
          ? method?.operators
          : [];
  return (
    <div className="flex max-w-7xl flex-col gap-6">
      <PageHeader
        title="Trends of passed results"
        subtitle="Control charts of the correlation coefficient (r), the first-derivative correlation and the largest band shift of passed results, to see a drift before a container fails."
        actions={
          isQa && (
            <Button onClick={() => scan.mutate()} disabled={scan.isPending}>
              Apply the run rules now
            </Button>
          )
        }
      />
      {scan.isSuccess && (
        <p className="text-sm" role="status">
          {scan.data.series} chart(s) checked; {scan.data.raised} new signal(s).
        </p>
      )}
      <section aria-labelledby="open-signals" className="flex flex-col gap-2">
        <h2 id="open-signals" className="text-lg">
          Open trend signals
        </h2>
        <SignalsList status="open" empty="No trend signal is open." />
      </section>
      {methods.isError && <ErrorNote error={methods.error} onRetry={() => void methods.refetch()} />}
      {methods.isSuccess && list.length === 0 && (
        <p className="text-sm text-muted">No passed result of a verified test yet: nothing to chart.</p>
      )}
      {method && (
        <>
          <div className="flex flex-wrap gap-3" role="group" aria-label="What to chart">
            <Field id="trend-method" label="Material and method version">
              <Select
                id="trend-method"
                value={methodId}
                onChange={(e) => set({ methodId: e.target.value, scope: 'all', value: '' })}
              >
                {list.map((m) => (
                  <option key={m.methodId} value={m.methodId}>
                    {m.materialName}, version {m.methodVersion} ({m.points} results
                    {m.openSignals ? `, ${m.openSignals} open signal(s)` : ''})
                  </option>
                ))}
              </Select>
            </Field>
            <Field id="trend-metric" label="Figure">
              <Select id="trend-metric" value={metric} onChange={(e) => set({ metric: e.target.value })}>
                {METRICS.map((k) => (
                  <option key={k} value={k}>
                    {METRIC_LABELS[k].title}
                  </option>
                ))}
              </Select>
            </Field>
            <Field id="trend-scope" label="Filter by">
              <Select id="trend-scope" value={scope} onChange={(e) => set({ scope: e.target.value, value: '' })}>
                {SCOPES.map((k) => (
                  <option key={k} value={k}>
                    {SCOPE_LABELS[k]}
                  </option>
                ))}
              </Select>
            </Field>
            {scope !== 'all' && (
              <Field id="trend-value" label={SCOPE_LABELS[scope]}>
                <Select id="trend-value" value={value} onChange={(e) => set({ value: e.target.value })}>
                  <option value="">Choose…</option>
                  {(options ?? []).map((o) => (
                    <option key={o.value} value={o.value}>
                      {o.label} ({o.points})
                    </option>
                  ))}
                </Select>
              </Field>
            )}
          </div>
          <ChartPanel filter={{ methodId, metric, scope, value }} />
          {isQa && <BaselineForm method={method} />}
        </>
      )}
    </div>
  );
}
