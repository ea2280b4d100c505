/** Per-band table of a polystyrene instrument check: expected, found, deviation, tolerance, verdict. */
import { ScrollRegion } from '../../../components/ScrollRegion';
import { Verdict } from '../../../components/Verdict';
import { formatShift, formatWavenumber } from '../../../lib/format';
import type { CheckResult } from '../api';

export function CheckBandTable({ result }: { result: CheckResult }) {
  return (
    <div className="flex flex-col gap-1">
      <ScrollRegion label="Polystyrene bands">
        <table className="w-full text-sm tabular-nums" aria-label="Polystyrene bands">
          <thead className="bg-paper">
            <tr>
              <th data-key-column="expected" scope="col" className="px-3 py-1.5 text-right">
                Expected
              </th>
              <th scope="col" className="px-3 py-1.5 text-right">
                Found
              </th>
              <th data-key-column="deviation" scope="col" className="px-3 py-1.5 text-right">
                Deviation
              </th>
              <th scope="col" className="px-3 py-1.5 text-right">
                Tolerance
              </th>
              <th data-key-column="band" scope="col" className="px-3 py-1.5 text-left">
                Band
              </th>
            </tr>
          </thead>
          <tbody>
            {result.bands.map((b) => (
              <tr key={b.nominal} className="border-t border-line">
                <td className="px-3 py-1 text-right">{formatWavenumber(b.nominal, 2)}</td>
                <td className="px-3 py-1 text-right">
                  {b.found === null ? 'not found' : formatWavenumber(b.found, 2)}
                </td>
                <td className="px-3 py-1 text-right">{b.deviation === null ? '—' : formatShift(b.deviation, 2)}</td>
                <td className="px-3 py-1 text-right">±{b.tolerance.toFixed(1)} cm⁻¹</td>
                <td className="px-3 py-1">
                  <Verdict verdict={b.ok ? 'pass' : 'fail'} label={b.ok ? 'within' : 'outside'} size="sm" />
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </ScrollRegion>
      <p className="text-xs text-muted">
        {result.spec}; {result.mode === 'atr' ? 'ATR' : 'transmission'}.{' '}
        {result.resolution.applicable
          ? `Resolution: ${result.resolution.checks.map((c) => `${c.name} = ${c.value.toFixed(3)} (more than ${c.limit} needed) ${c.ok ? 'met' : 'not met'}`).join('; ')}.`
          : `Resolution not applicable: ${result.resolution.reason}`}{' '}
        Engine {result.engineVersion}.
      </p>
    </div>
  );
}
