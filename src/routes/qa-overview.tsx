/** QA overview: the figures QA reports to management for a chosen period, each with its plot and its numbers. */
import { useMemo, useState } from 'react';
import { Link } from 'react-router-dom';
import { ErrorNote } from '../components/ErrorNote';
import { PeriodFields } from '../components/PeriodFields';
import { PageHeader } from '../components/PageHeader';
import { useQaOverview, type RateRow } from '../features/trending/api';
import { BarPlot } from '../features/trending/components/BarPlot';

const pct = (r: number | null) => (r === null ? '—' : `${(r * 100).toFixed(1)} %`);

function RateSection({ id, title, rows, what }: { id: string; title: string; rows: RateRow[]; what: string }) {
  const labels = useMemo(() => rows.map((r) => r.label), [rows]);
  const values = useMemo(() => rows.map((r) => (r.rate === null ? null : r.rate * 100)), [rows]);
  return (
    <section aria-labelledby={id} className="flex flex-col gap-2 rounded-md border border-line bg-white p-4">
      <h2 id={id} className="text-lg">
        {title}
      </h2>
      {rows.length === 0 ? (
        <p className="text-sm text-muted">Nothing in this period.</p>
      ) : (
        <>
          <BarPlot labels={labels} values={values} yLabel="%" digits={1} label={title} />
          <table className="text-sm" aria-label={title}>
            <tbody>
              {rows.map((r) => (
                <tr key={r.key} className="border-t border-line">
                  <td className="py-1 pr-4" data-key-column="label">
                    {r.label}
                  </td>
                  <td className="py-1 pr-4 tabular-nums" data-key-column="rate">
                    {pct(r.rate)}
                  </td>
                  <td className="py-1 tabular-nums text-muted">
                    {r.count} of {r.total} {what}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </>
      )}
    </section>
  );
}

export default function QaOverviewPage() {
  const today = new Date().toISOString().slice(0, 10);
  const [from, setFrom] = useState(new Date(Date.now() - 90 * 86_400_000).toISOString().slice(0, 10));
  const [to, setTo] = useState(today);
  const q = useQaOverview(from, to);
  const d = q.data;
  const ages = useMemo(() => d?.investigationAgeBuckets ?? [], [d]);
  const certs = useMemo(() => d?.receiptToCertificate ?? [], [d]);
  return (
    <div className="flex max-w-7xl flex-col gap-5">
      <PageHeader
        title="QA overview"
        subtitle="Open investigations by age, first-pass rate per source, invalid-measurement rate per instrument and operator, and time from receipt to certificate, for the period chosen."
      />
      <PeriodFields ids={['ov-from', 'ov-to']} from={from} to={to} onFrom={setFrom} onTo={setTo} groupLabel="Period" />
      {q.isError && <ErrorNote error={q.error} onRetry={() => void q.refetch()} />}
      {q.isPending && <p className="text-sm text-muted">Loading…</p>}
      {d && (
        <>
          <section aria-labelledby="ov-inv" className="flex flex-col gap-2 rounded-md border border-line bg-white p-4">
            <h2 id="ov-inv" className="text-lg">
              Open investigations by age (now)
            </h2>
            <BarPlot
              labels={ages.map((b) => b.label)}
              values={ages.map((b) => b.count)}
              yLabel="Investigations"
              label="Open investigations by age"
            />
            {d.openInvestigations.length === 0 ? (
              <p className="text-sm text-muted">No investigation is open.</p>
            ) : (
              <ul className="text-sm">
                {d.openInvestigations.map((i) => (
                  <li key={i.id}>
                    <Link to={`/investigations/${i.id}`} className="text-petrol underline underline-offset-2">
                      {i.number}
                    </Link>{' '}
                    lot {i.lotNumber}: open {i.ageDays} day(s)
                  </li>
                ))}
              </ul>
            )}
          </section>
          <RateSection
            id="ov-fp"
            title="First-pass rate per source"
            rows={d.firstPassBySource}
            what="lots passed at the first attempt"
          />
          <RateSection
            id="ov-inst"
            title="Invalid-measurement rate per instrument"
            rows={d.invalidByInstrument}
            what="measurements invalid"
          />
          <RateSection
            id="ov-op"
            title="Invalid-measurement rate per operator"
            rows={d.invalidByOperator}
            what="measurements invalid"
          />
          <section aria-labelledby="ov-cert" className="flex flex-col gap-2 rounded-md border border-line bg-white p-4">
            <h2 id="ov-cert" className="text-lg">
              Time from receipt to certificate
            </h2>
            {certs.length === 0 ? (
              <p className="text-sm text-muted">No first certificate was issued in this period.</p>
            ) : (
              <>
                <p className="text-sm">
                  Median {d.receiptToCertificateMedianDays?.toFixed(1)} day(s) over {certs.length} lot(s).
                </p>
                <BarPlot
                  labels={certs.map((c) => c.lotNumber)}
                  values={certs.map((c) => c.days)}
                  yLabel="Days"
                  digits={1}
                  label="Days from receipt to certificate per lot"
                />
              </>
            )}
          </section>
          <ul className="text-sm text-muted">
            {d.notes.map((n) => (
              <li key={n}>{n}</li>
            ))}
          </ul>
        </>
      )}
    </div>
  );
}
