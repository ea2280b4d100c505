/**
 * One measurement in full: verdict (icon + word), every criterion with value and limit, the band
 * table with assignments, extra bands, the explanation in words, the library mix-up hint, the
 * versions used, and the zoomable overlay of sample, best reference and difference.
 */
import { useMemo } from 'react';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { SpectrumPlot, type PlotBand } from '../../../components/SpectrumPlot';
import { Verdict } from '../../../components/Verdict';
import { formatScore, formatShift, formatWavenumber } from '../../../lib/format';
import {
  rawFileUrl,
  useMeasurement,
  useMeasurementPlot,
  type Criterion,
  type MeasurementDetail,
  type StoredResult,
} from '../api';

export function verdictLabel(v: 'pass' | 'fail' | 'invalid'): string {
  return v === 'invalid' ? 'Invalid measurement' : v === 'pass' ? 'Pass' : 'Fail';
}

function criterionValue(c: Criterion): string {
  if (c.key === 'band-concordance' || c.key === 'relative-intensity') return `${c.value} of ${c.limit}`;
  if (c.key === 'extra-bands') return String(c.value);
  if (c.key === 'reference-model') return c.value >= c.limit ? 'built' : 'cannot be built';
  if (c.key === 'residual' || c.key === 'mahalanobis') return c.value.toFixed(2);
  return formatScore(c.value);
}
function criterionLimit(c: Criterion): string {
  if (c.key === 'band-concordance' || c.key === 'relative-intensity') return `all ${c.limit}`;
  if (c.key === 'extra-bands') return `at most ${c.limit}`;
  if (c.key === 'reference-model') return 'needed';
  if (c.key === 'residual') return `≤ ${c.limit} × its limit`;
  if (c.key === 'mahalanobis') return `≤ ${c.limit}`;
  return `${c.comparison === '>=' ? '≥' : '≤'} ${formatScore(c.limit)}`;
}

export function CriteriaTable({ result }: { result: StoredResult }) {
  if (!result.criteria.length) return null;
  return (
    <table className="w-full text-sm" aria-label="Criteria">
      <thead>
        <tr className="border-b border-line text-left text-muted">
          <th data-key-column="criterion" className="py-1 pr-3 font-medium">
            Criterion
          </th>
          <th data-key-column="value" className="py-1 pr-3 text-right font-medium">
            Value
          </th>
          <th data-key-column="limit" className="py-1 pr-3 text-right font-medium">
            Limit
          </th>
          <th data-key-column="verdict" className="py-1 font-medium">
            Verdict
          </th>
        </tr>
      </thead>
      <tbody>
        {result.criteria.map((c, i) => (
          <tr key={`${c.key}-${i}`} className="border-b border-line/60">
            <td className="py-1 pr-3">{c.name}</td>
            <td className="py-1 pr-3 text-right tabular-nums">{criterionValue(c)}</td>
            <td className="py-1 pr-3 text-right tabular-nums">{criterionLimit(c)}</td>
            <td className="py-1">
              <Verdict verdict={c.verdict} size="sm" />
            </td>
          </tr>
        ))}
      </tbody>
    </table>
  );
}

/** The engine writes units as "cm-1"; shown as cm⁻¹. */
const unitText = (s: string) => s.replaceAll('cm-1', 'cm⁻¹');

const fraction = (v: number | null | undefined) =>
  v === null || v === undefined || !Number.isFinite(v) ? '—' : v.toFixed(2);

function IntensityCells({ intensity: i }: { intensity: StoredResult['bands'][number]['intensity'] }) {
  if (!i) return <td colSpan={4} className="py-1 pr-3 text-muted" />;
  return (
    <>
      <td className="py-1 pr-3 text-right tabular-nums">{fraction(i.reference)}</td>
      <td className="py-1 pr-3 text-right tabular-nums">{fraction(i.sample)}</td>
      <td className="py-1 pr-3 text-right whitespace-nowrap tabular-nums">
        {i.difference === null ? '—' : `${i.difference >= 0 ? '+' : '−'}${Math.abs(i.difference).toFixed(2)}`}
        <span className="text-muted"> (±{i.tolerance})</span>
      </td>
      <td className="py-1 pr-3">
        {i.verdict === 'not-compared' ? (
          <span className="text-muted">not compared</span>
        ) : (
          <Verdict verdict={i.verdict} label={i.verdict === 'pass' ? 'Yes' : 'No'} size="sm" />
        )}
      </td>
    </>
  );
}

export function BandTable({ result }: { result: StoredResult }) {
  if (!result.bands.length && !result.extraBands.length) return null;
  const positional = result.bands.find((b) => b.toleranceRule && !b.widened)?.toleranceRule;
  const intensities = result.bands.some((b) => b.intensity);
  return (
    <div className="flex flex-col gap-2">
      {result.bands.length > 0 && (
        <table className="w-full text-sm" aria-label="Band concordance">
          <thead>
            <tr className="border-b border-line text-left text-muted">
              <th data-key-column="reference-band" className="py-1 pr-3 text-right font-medium">
                Reference band
              </th>
              <th data-key-column="sample-band" className="py-1 pr-3 text-right font-medium">
                Sample band
              </th>
              <th className="py-1 pr-3 text-right font-medium">Shift</th>
              <th className="py-1 pr-3 text-right font-medium">Tolerance</th>
              <th data-key-column="within" className="py-1 pr-3 font-medium">
                Within
              </th>
              {intensities && (
                <>
                  <th className="py-1 pr-3 text-right font-medium">Relative intensity, reference</th>
                  <th className="py-1 pr-3 text-right font-medium">Sample</th>
                  <th className="py-1 pr-3 text-right font-medium">Difference</th>
                  <th className="py-1 pr-3 font-medium">Agrees</th>
                </>
              )}
              <th className="py-1 font-medium">Assignment (set by QA)</th>
            </tr>
          </thead>
          <tbody>
            {result.bands.map((b) => (
              <tr key={b.referenceBand} className="border-b border-line/60">
                <td className="py-1 pr-3 text-right whitespace-nowrap tabular-nums">
                  {formatWavenumber(b.referenceBand)}
                </td>
                <td className="py-1 pr-3 text-right whitespace-nowrap tabular-nums">
                  {b.sampleBand === null ? 'not found' : formatWavenumber(b.sampleBand)}
                </td>
                <td className="py-1 pr-3 text-right whitespace-nowrap tabular-nums">{formatShift(b.shift)}</td>
                <td className="py-1 pr-3 text-right tabular-nums">
                  <span className="whitespace-nowrap">±{b.tolerance.toFixed(1)} cm⁻¹</span>
                  {b.widened && b.toleranceRule && (
                    <span className="block text-xs text-muted">({unitText(b.toleranceRule)})</span>
                  )}
                </td>
                <td className="py-1 pr-3">
                  <Verdict
                    verdict={b.withinTolerance ? 'pass' : 'fail'}
                    label={b.withinTolerance ? 'Yes' : 'No'}
                    size="sm"
                  />
                </td>
                {intensities && <IntensityCells intensity={b.intensity} />}
                <td className="py-1 text-muted">{b.assignment || '—'}</td>
              </tr>
            ))}
          </tbody>
        </table>
      )}
      {result.bands.length > 0 && positional && (
        <p className="text-xs text-muted">
          Shift tolerance: {unitText(positional)} for every band; a sharp band never passes beyond it. Only a broad band
          (full width at half height of 80 cm⁻¹ or more) may shift further, by the method&apos;s fraction of its width.
        </p>
      )}
      {intensities && (
        <p className="text-xs text-muted">
          Relative intensity: each band&apos;s height as a fraction of the strongest reference band, in the reference
          and (against the same band) in the sample. A band not found within its shift tolerance is not compared and
          does not agree.
        </p>
      )}
      {result.extraBands.length > 0 && (
        <p className="text-sm">
          <span className="font-medium">Strong bands of the sample missing from the reference: </span>
          {result.extraBands.map((b) => formatWavenumber(b.position)).join('; ')}
        </p>
      )}
    </div>
  );
}

export function MeasurementOverlay({
  measurementId,
  label,
  bandsOf,
}: {
  measurementId: number;
  label: string;
  bandsOf?: StoredResult | null;
}) {
  const plot = useMeasurementPlot(measurementId);
  const bands = useMemo<PlotBand[]>(
    () =>
      (bandsOf?.bands ?? []).map((b) => ({
        position: b.referenceBand,
        shift: b.shift,
        matched: b.withinTolerance,
        label: b.assignment || undefined,
      })),
    [bandsOf],
  );
  if (plot.isPending) return <p className="text-sm text-muted">Loading the spectrum…</p>;
  if (plot.isError) return <ErrorNote error={plot.error} />;
  const d = plot.data;
  if (!d.overlay)
    return (
      <SpectrumPlot
        x={d.raw.x}
        sample={d.raw.y}
        sampleLabel="Sample as measured"
        yLabel="Absorbance"
        label={`Raw spectrum of ${label}`}
        height={220}
      />
    );
  return (
    <SpectrumPlot
      x={d.overlay.x}
      sample={d.overlay.sample as number[]}
      reference={d.overlay.reference as number[]}
      difference={d.overlay.difference as number[]}
      sampleLabel={`Sample ${label}`}
      referenceLabel={`Reference ${d.overlay.referenceCode}`}
      yLabel="Absorbance (scaled)"
      excludedRegions={d.excludedRegions}
      bands={bands}
      height={240}
      differenceHeight={140}
      label={`Overlay of ${label} with reference ${d.overlay.referenceCode} and their difference`}
    />
  );
}

export function RawSpectrum({ measurementId, label }: { measurementId: number; label: string }) {
  const plot = useMeasurementPlot(measurementId);
  if (plot.isPending) return <p className="text-sm text-muted">Loading the spectrum…</p>;
  if (plot.isError) return <ErrorNote error={plot.error} />;
  return (
    <SpectrumPlot
      x={plot.data.raw.x}
      sample={plot.data.raw.y}
      sampleLabel={`${label} as measured`}
      yLabel="Absorbance"
      height={180}
      label={`Raw spectrum of ${label} as uploaded`}
    />
  );
}

export function HintNote({ result }: { result: StoredResult }) {
  if (!result.libraryHintText) return null;
  return (
    <p className="rounded-md border border-amber/50 bg-amber-soft px-3 py-2 text-sm" data-testid="library-hint">
      {result.libraryHintText}
    </p>
  );
}

export function MeasurementFacts({ m }: { m: MeasurementDetail }) {
  return (
    <dl className="grid grid-cols-[max-content_1fr] gap-x-4 gap-y-1 text-sm">
      <dt className="text-muted">Raw file</dt>
      <dd className="min-w-0">
        <a className="text-petrol underline underline-offset-2" href={rawFileUrl(m.id)}>
          {m.file.name}
        </a>{' '}
        <span className="break-all text-xs text-muted">SHA-256 {m.file.sha256}</span>
      </dd>
      <dt className="text-muted">Measured</dt>
      <dd>
        <DateTime value={m.createdAt} seconds /> by {m.createdBy.name}
      </dd>
      <dt className="text-muted">Instrument</dt>
      <dd>
        {m.instrument?.name ?? '—'}; instrument check{' '}
        {m.instrumentCheck
          ? `#${m.instrumentCheck.id}, ${m.instrumentCheck.verdict === 'pass' ? 'passed' : 'failed'}, valid until `
          : '—'}
        {m.instrumentCheck && <DateTime value={m.instrumentCheck.validUntil} />}
      </dd>
      <dt className="text-muted">Identity method</dt>
      <dd>{m.method ? `version ${m.method.version} (${m.method.technique})` : '—'}</dd>
      <dt className="text-muted">Reference set</dt>
      <dd>{m.references.map((r) => r.code).join(', ') || '—'}</dd>
      <dt className="text-muted">Engine</dt>
      <dd>{m.engineVersion}</dd>
    </dl>
  );
}

/** Verdict, criteria, explanation, hint, bands and plot of one measurement. */
export function MeasurementResult({ measurementId, compact }: { measurementId: number; compact?: boolean }) {
  const q = useMeasurement(measurementId);
  if (q.isPending) return <p className="text-sm text-muted">Loading the result…</p>;
  if (q.isError) return <ErrorNote error={q.error} />;
  const m = q.data;
  const r = m.result;
  if (!r) return <ErrorNote error="This measurement has no stored result." />;
  return (
    <article className="flex flex-col gap-4" aria-label={`Result of ${m.label}`} data-testid="measurement-result">
      <div className="flex flex-wrap items-center gap-3">
        <Verdict verdict={m.verdict} label={verdictLabel(m.verdict)} size="lg" />
        <div className="text-sm">
          <div className="font-medium">{m.label}</div>
          <div className="text-muted">Correlation coefficient (r) {formatScore(m.matchScore)}</div>
        </div>
      </div>
      {m.verdict === 'invalid' && (
        <p className="rounded-md border border-amber/50 bg-amber-soft px-3 py-2 text-sm">
          This measurement is neither pass nor fail: the spectrum is not good enough to judge. Measure this container
          again.
        </p>
      )}
      {r.explanation.length > 0 && (
        <ul className="list-disc pl-5 text-sm" aria-label="Explanation">
          {r.explanation.map((e, i) => (
            <li key={i}>{e}</li>
          ))}
        </ul>
      )}
      <HintNote result={r} />
      <CriteriaTable result={r} />
      <MeasurementOverlay measurementId={m.id} label={m.label} bandsOf={r} />
      {!compact && <BandTable result={r} />}
      {r.sampleMeta?.warnings?.length ? (
        <p className="text-xs text-muted">Reading notes: {r.sampleMeta.warnings.join(' ')}</p>
      ) : null}
      <MeasurementFacts m={m} />
    </article>
  );
}
