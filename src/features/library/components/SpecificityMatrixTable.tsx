/**
 * The specificity matrix as a table of numbers with words: each row is a material's identity
 * test (its approved method and references), each column a material whose approved references
 * are scored as if they were that row's material. "Would pass" means the row's test does not
 * tell the column's material apart. The highest correlation is shown in every cell.
 */
import { formatScore } from '../../../lib/format';
import type { MatrixCell, SpecificityMatrix } from '../api';

const STATE: Record<MatrixCell['state'], { word: string; icon: string; cls: string }> = {
  'would-pass': { word: 'would pass', icon: '⚠', cls: 'bg-fail-soft text-fail font-semibold' },
  'within-margin': { word: 'within the margin of a limit', icon: '⚠', cls: 'bg-amber-soft text-amber font-semibold' },
  distinct: { word: 'distinct', icon: '✓', cls: 'text-ink' },
  'not-comparable': { word: 'not compared (never counted distinct)', icon: '?', cls: 'bg-amber-soft text-amber' },
  self: { word: 'same material: consistent', icon: '=', cls: 'bg-paper text-muted' },
  'self-inconsistent': {
    word: 'same material: a reference fails the others',
    icon: '!',
    cls: 'bg-amber-soft text-amber',
  },
  single: { word: 'same material (one reference)', icon: '=', cls: 'bg-paper text-muted' },
};

export function SpecificityMatrixTable({
  matrix,
  focusMaterialId,
}: {
  matrix: SpecificityMatrix;
  focusMaterialId?: number;
}) {
  const mats = matrix.materials;
  if (mats.length === 0)
    return (
      <p className="text-sm text-muted">
        No material of this technique has an approved method and approved references yet.
      </p>
    );
  const rows = focusMaterialId ? mats.filter((m) => m.id === focusMaterialId) : mats;
  const cols = mats;
  const cell = (r: number, c: number) => matrix.cells.find((x) => x.rowMaterialId === r && x.columnMaterialId === c);
  const label = focusMaterialId ? 'Specificity of this grade against the approved library' : 'Specificity matrix';
  return (
    <div className="flex flex-col gap-2">
      <div className="overflow-x-auto rounded-md border border-line bg-white">
        <table className="border-collapse text-sm tabular-nums" aria-label={label}>
          <thead className="bg-paper">
            <tr>
              <th scope="col" className="px-3 py-2 text-left align-bottom font-semibold">
                Test of ↓ / spectra of →
              </th>
              {cols.map((c) => (
                <th key={c.id} scope="col" className="px-3 py-2 text-left align-bottom font-semibold" title={c.name}>
                  {c.code}
                  <span className="block text-xs font-normal text-muted">{c.references} ref.</span>
                </th>
              ))}
            </tr>
          </thead>
          <tbody>
            {rows.map((r) => (
              <tr key={r.id} className="border-t border-line">
                <th scope="row" className="px-3 py-2 text-left font-semibold whitespace-nowrap" title={r.name}>
                  {r.code}
                  <span className="block text-xs font-normal text-muted">method v{r.methodVersion}</span>
                </th>
                {cols.map((c) => {
                  const x = cell(r.id, c.id);
                  if (!x)
                    return (
                      <td key={c.id} className="px-3 py-2 text-muted">
                        —
                      </td>
                    );
                  const s = STATE[x.state];
                  return (
                    <td
                      key={c.id}
                      className={`px-3 py-2 align-top ${s.cls}`}
                      data-state={x.state}
                      data-testid={`cell-${r.code}-${c.code}`}
                    >
                      <div>{x.correlation === null ? '—' : formatScore(x.correlation)}</div>
                      <div className="text-xs whitespace-nowrap">
                        <span aria-hidden>{s.icon} </span>
                        {s.word}
                        {x.state === 'would-pass' && ` (${x.passing} of ${x.scored})`}
                      </div>
                    </td>
                  );
                })}
              </tr>
            ))}
          </tbody>
        </table>
      </div>
      <p className="text-xs text-muted">
        Numbers: highest correlation of a column material's approved reference against the row material's references,
        under the row material's method. “Would pass”: at least one spectrum of the column material passes every
        criterion of the row material's identity test, so that test does not tell the two apart.
        {matrix.notDiscriminated.length === 0
          ? ' Every pair is told apart.'
          : ` ${matrix.notDiscriminated.length} ordered pair(s) are not told apart.`}
      </p>
    </div>
  );
}
