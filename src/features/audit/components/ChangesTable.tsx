/**
 * Before and after values of one event side by side, field by field. What changed is marked with
 * a word and a sign, not colour alone; unchanged fields are folded away unless asked for.
 */
import { ScrollRegion } from '../../../components/ScrollRegion';
import { useState } from 'react';
import type { FieldChange } from '../api';
import { ColumnHead } from './ColumnHead';
import { namedValueText } from './labels';

const KIND: Record<FieldChange['kind'], { word: string; sign: string; row: string }> = {
  changed: { word: 'changed', sign: '≠', row: 'bg-amber-soft' },
  added: { word: 'added', sign: '+', row: 'bg-pass-soft' },
  removed: { word: 'removed', sign: '−', row: 'bg-fail-soft' },
  unchanged: { word: 'same', sign: '=', row: '' },
};

export function ChangesTable({
  changes,
  hasBefore,
  hasAfter,
}: {
  changes: FieldChange[];
  hasBefore: boolean;
  hasAfter: boolean;
}) {
  const [showSame, setShowSame] = useState(false);
  const same = changes.filter((c) => c.kind === 'unchanged').length;
  const rows = showSame ? changes : changes.filter((c) => c.kind !== 'unchanged');
  if (changes.length === 0)
    return <p className="text-sm text-muted">This event records no values (for example a sign-in).</p>;
  return (
    <div className="flex flex-col gap-2">
      <div className="flex flex-wrap items-center gap-3 text-sm">
        <span className="text-muted">
          {changes.length - same} field{changes.length - same === 1 ? '' : 's'} differ
          {changes.length - same === 1 ? 's' : ''}
          {!hasBefore && ' (no earlier value: the record was created or the event only states new values)'}
          {!hasAfter && ' (no later value)'}
        </span>
        {same > 0 && (
          <label className="ml-auto inline-flex items-center gap-2">
            <input
              type="checkbox"
              checked={showSame}
              onChange={(e) => setShowSame(e.target.checked)}
              className="size-4 accent-petrol"
            />
            Show {same} unchanged field{same === 1 ? '' : 's'}
          </label>
        )}
      </div>
      <ScrollRegion label="Values before and after">
        <table className="w-full border-collapse text-sm" aria-label="Values before and after">
          <thead className="bg-paper">
            <tr className="border-b border-line text-left">
              <ColumnHead column="field">Field</ColumnHead>
              <ColumnHead column="before" className="w-[38%]">
                Before
              </ColumnHead>
              <ColumnHead column="after" className="w-[38%]">
                After
              </ColumnHead>
            </tr>
          </thead>
          <tbody>
            {rows.map((c) => {
              const k = KIND[c.kind];
              return (
                <tr key={c.path} className={`border-b border-line last:border-b-0 ${k.row}`} data-kind={c.kind}>
                  <th scope="row" className="px-3 py-1.5 text-left align-top font-normal">
                    <span className="break-words">{c.label}</span>
                    <span className="ml-2 font-mono text-xs break-all text-muted">{c.path}</span>
                    <span className="ml-2 text-xs whitespace-nowrap text-muted">
                      <span aria-hidden>{k.sign} </span>
                      {k.word}
                    </span>
                  </th>
                  <td className="px-3 py-1.5 align-top font-mono text-xs break-all whitespace-pre-wrap">
                    {c.kind === 'added' ? '' : namedValueText(c.before, c.beforeName)}
                  </td>
                  <td className="px-3 py-1.5 align-top font-mono text-xs break-all whitespace-pre-wrap">
                    {c.kind === 'removed' ? '' : namedValueText(c.after, c.afterName)}
                  </td>
                </tr>
              );
            })}
            {rows.length === 0 && (
              <tr>
                <td colSpan={3} className="px-3 py-3 text-center text-muted">
                  No field differs.
                </td>
              </tr>
            )}
          </tbody>
        </table>
      </ScrollRegion>
    </div>
  );
}
