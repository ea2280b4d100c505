/** What an investigation of a trend signal is about: the signal and the measurements of its pattern. */
import { Link } from 'react-router-dom';
import { DateTime } from '../../../components/DateTime';
import type { TrendSubject } from '../api';

export function TrendSubjectView({ subject }: { subject: TrendSubject }) {
  const s = subject.signal;
  return (
    <section aria-labelledby="subject" className="mb-5 flex flex-col gap-2 text-sm">
      <h2 id="subject" className="text-lg">
        Trend signal under investigation
      </h2>
      <p>
        <Link to={`/trending/signals/${s.id}`} className="font-medium text-petrol underline underline-offset-2">
          Signal {s.id}
        </Link>{' '}
        · {s.materialName} (method version {s.methodVersion}) · {s.scopeLabel} · {s.metricTitle}: {s.ruleText}
      </p>
      <p>{s.detail}</p>
      <p className="text-muted">
        Raised <DateTime value={s.raisedAt} />. Rule source: {s.ruleSource}.
      </p>
      <p>
        <span className="font-medium">Why it is investigated: </span>
        {subject.reason}
      </p>
      <table className="w-full max-w-4xl border-collapse text-left" data-testid="trend-measurements">
        <caption className="mb-1 text-left font-medium">Measurements of the pattern</caption>
        <thead>
          <tr className="border-b border-line">
            <th className="py-1 pr-3" data-key-column="recorded">
              Recorded
            </th>
            <th className="py-1 pr-3" data-key-column="lot">
              Lot
            </th>
            <th className="py-1 pr-3">Container</th>
            <th className="py-1 pr-3">Source</th>
            <th className="py-1 pr-3">Instrument</th>
            <th className="py-1 pr-3">Operator</th>
            <th className="py-1 pr-3 text-right">{s.metricTitle}</th>
          </tr>
        </thead>
        <tbody>
          {subject.measurements.map((m) => (
            <tr key={m.measurementId} className="border-b border-line">
              <td className="py-1 pr-3">
                <DateTime value={m.at} />
              </td>
              <td className="py-1 pr-3">{m.lotNumber}</td>
              <td className="py-1 pr-3 tabular-nums">{m.container}</td>
              <td className="py-1 pr-3">{m.source}</td>
              <td className="py-1 pr-3">{m.instrument}</td>
              <td className="py-1 pr-3">{m.operator}</td>
              <td className="py-1 pr-3 text-right tabular-nums">
                {m.value === null ? '–' : s.metric === 'band-shift' ? `${m.value.toFixed(2)} cm⁻¹` : m.value.toFixed(4)}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </section>
  );
}
