/** The specificity gate of one reference: every approved reference of another material, scored both ways. */
import { Verdict } from '../../../components/Verdict';
import { formatScore } from '../../../lib/format';
import type { DirectionScore, GateReport } from '../api';

function Dir({ d }: { d: DirectionScore | null }) {
  if (!d) return <span className="text-muted">—</span>;
  return (
    <span className="flex flex-wrap items-center gap-2">
      <Verdict
        verdict={d.verdict === 'pass' ? 'invalid' : d.verdict === 'invalid' ? 'pending' : 'pass'}
        label={
          d.verdict === 'pass'
            ? 'would pass'
            : d.verdict === 'invalid'
              ? 'not compared (quality)'
              : d.state === 'within-margin'
                ? 'within the margin of a limit'
                : 'told apart'
        }
        size="sm"
      />
      <span className="tabular-nums">r {formatScore(d.correlation)}</span>
      {d.derivativeCorrelation !== null && (
        <span className="tabular-nums">r′ {formatScore(d.derivativeCorrelation)}</span>
      )}
      {d.bandsMatched && <span>bands {d.bandsMatched}</span>}
    </span>
  );
}

export function GateTable({ gate, onlyOffending = false }: { gate: GateReport; onlyOffending?: boolean }) {
  const pairs = onlyOffending ? gate.offending : gate.pairs;
  return (
    <div className="flex flex-col gap-2">
      <p className="text-sm" role="status" data-testid="gate-summary">
        {gate.pairs.length === 0
          ? `No other material has approved references under this technique: nothing to tell apart (method version ${gate.methodVersion}).`
          : gate.passed
            ? `Every one of ${gate.pairs.length} approved reference(s) of other materials is told apart under method version ${gate.methodVersion}.`
            : `${gate.offending.length} of ${gate.pairs.length} approved reference(s) of other materials would pass this grade's test, come within the margin of a limit, or could not be compared under method version ${gate.methodVersion}.`}
      </p>
      {pairs.length > 0 && (
        <div className="overflow-x-auto rounded-md border border-line bg-white">
          <table className="w-full text-sm" aria-label={onlyOffending ? 'Offending pairs' : 'Specificity gate'}>
            <thead className="bg-paper">
              <tr>
                <th scope="col" className="px-3 py-2 text-left">
                  Other material
                </th>
                <th scope="col" className="px-3 py-2 text-left">
                  Its reference
                </th>
                <th scope="col" className="px-3 py-2 text-left">
                  It scored against this reference
                </th>
                <th scope="col" className="px-3 py-2 text-left">
                  This reference scored against it
                </th>
              </tr>
            </thead>
            <tbody>
              {pairs.map((p) => (
                <tr
                  key={p.referenceId}
                  className={`border-t border-line ${p.state && p.state !== 'distinct' ? 'bg-fail-soft/50' : p.wouldPass ? 'bg-fail-soft/50' : ''}`}
                  data-would-pass={p.wouldPass}
                >
                  <td className="px-3 py-1.5">
                    <span className="font-medium">{p.materialCode}</span> {p.materialName}
                  </td>
                  <td className="px-3 py-1.5">{p.referenceCode}</td>
                  {p.notComparable ? (
                    <td colSpan={2} className="px-3 py-1.5 text-muted">
                      not compared (never counted distinct): {p.notComparable}
                    </td>
                  ) : (
                    <>
                      <td className="px-3 py-1.5">
                        <Dir d={p.otherAsSample} />
                      </td>
                      <td className="px-3 py-1.5">
                        <Dir d={p.candidateAsSample} />
                      </td>
                    </>
                  )}
                </tr>
              ))}
            </tbody>
          </table>
        </div>
      )}
    </div>
  );
}
