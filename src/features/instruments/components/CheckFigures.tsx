/** The figures of a check other than polystyrene: blank bands, noise, NIR wavelength positions or noise segments. */
import type { AnyCheckResult } from '../api';

const abs = (v: number) => v.toExponential(2);

export function CheckFigures({ result }: { result: Exclude<AnyCheckResult, { resolution: unknown }> }) {
  switch (result.check) {
    case 'atr-blank':
      return (
        <p className="text-sm" data-testid="check-figures">
          Baseline {abs(result.baseline)}; largest excursion{' '}
          {result.largest ? `${abs(result.largest.height)} at ${result.largest.position.toFixed(1)} cm-1` : 'none'};
          limit {abs(result.limit)}.{' '}
          {result.bandsAboveLimit.length
            ? `Bands beyond the limit (carry-over or a contaminated background): ${result.bandsAboveLimit
                .map((b) => `${b.position.toFixed(1)} cm-1 (${abs(b.height)})`)
                .join(', ')}.`
            : 'No band beyond the limit.'}
        </p>
      );
    case 'noise':
      return (
        <p className="text-sm" data-testid="check-figures">
          RMS noise {abs(result.rms)} (limit {abs(result.limitRms)}); peak to peak {abs(result.peakToPeak)}
          {result.limitPeakToPeak !== null ? ` (limit ${abs(result.limitPeakToPeak)})` : ''}; {result.pointsChecked}{' '}
          points.
        </p>
      );
    case 'nir-wavelength':
      return (
        <ul className="text-sm tabular-nums" data-testid="check-figures">
          <li className="text-muted">Standard: {result.standard}</li>
          {result.bands.map((b) => (
            <li key={b.nominal}>
              {b.nominal.toFixed(1)} nm: found {b.found === null ? 'no band' : `${b.found.toFixed(2)} nm`}, deviation{' '}
              {b.deviation === null ? '-' : b.deviation.toFixed(2)} nm (tolerance {b.tolerance} nm){' '}
              {b.ok ? 'within' : 'OUTSIDE'}
            </li>
          ))}
        </ul>
      );
    case 'nir-photometric-noise':
      return (
        <p className="text-sm" data-testid="check-figures">
          Mean RMS over {result.segments.length} segments {abs(result.meanRms)} (limit {abs(result.limit)}); largest
          segment {abs(result.maxRms)}.
        </p>
      );
  }
}
