/**
 * Characteristic bands of a reference, high to low wavenumber, with the assignment QA set for
 * each band (none shown where QA set none). While the reference is a draft, QA may add, move or
 * remove bands and set an assignment per band; the change is saved with a reason (audited) and
 * signed with the reference at approval. QA reviewing a draft also sees the correlation table's
 * candidates, ranked by the spectrum's other bands, for information only (docs/methods.md,
 * "Band assignments").
 */
import { ScrollRegion } from '../../../components/ScrollRegion';
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input } from '../../../components/Field';
import { formatWavenumber } from '../../../lib/format';
import { useUpdateBands, type BandCandidates, type StoredBand } from '../api';

type Row = { key: number; position: string; assignment: string; original?: StoredBand };
let seq = 0;

export function BandTable({
  referenceId,
  bands,
  editable,
  candidates,
}: {
  referenceId: number;
  bands: StoredBand[];
  editable: boolean;
  /** only for QA reviewing a draft */
  candidates?: BandCandidates[];
}) {
  const [editing, setEditing] = useState(false);
  const [rows, setRows] = useState<Row[]>([]);
  const [reason, setReason] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  const update = useUpdateBands();
  const sorted = [...bands].sort((a, b) => b.position - a.position);

  const start = () => {
    setRows(
      sorted.map((b) => ({
        key: ++seq,
        position: b.position.toFixed(2),
        assignment: b.shownAssignment ?? '',
        original: b,
      })),
    );
    setReason('');
    setProblem(null);
    setEditing(true);
  };
  const save = () => {
    const out: { position: number; assignment?: string }[] = [];
    for (const r of rows) {
      const p = Number(r.position.replace(',', '.'));
      if (!Number.isFinite(p) || p <= 0) return setProblem(`“${r.position}” is not a wavenumber.`);
      out.push({ position: p, assignment: r.assignment.trim() || undefined });
    }
    if (reason.trim().length < 3) return setProblem('Give a reason for the change (at least 3 characters).');
    setProblem(null);
    update.mutate({ id: referenceId, bands: out, reason: reason.trim() }, { onSuccess: () => setEditing(false) });
  };

  if (editing)
    return (
      <div className="flex flex-col gap-3">
        <ScrollRegion label="Edit characteristic bands">
          <table className="w-full text-sm" aria-label="Edit characteristic bands">
            <thead className="bg-paper">
              <tr>
                <th data-key-column="position" className="px-3 py-2 text-left">
                  Position (cm⁻¹)
                </th>
                <th className="px-3 py-2 text-left">Assignment set by QA (empty: none shown)</th>
                <th className="px-3 py-2" />
              </tr>
            </thead>
            <tbody>
              {rows.map((r) => (
                <tr key={r.key} className="border-t border-line">
                  <td className="px-3 py-1">
                    <Input
                      aria-label="Band position"
                      inputMode="decimal"
                      className="w-28 tabular-nums"
                      value={r.position}
                      onChange={(e) =>
                        setRows(rows.map((x) => (x.key === r.key ? { ...x, position: e.target.value } : x)))
                      }
                    />
                  </td>
                  <td className="px-3 py-1">
                    <Input
                      aria-label="Assignment"
                      value={r.assignment}
                      onChange={(e) =>
                        setRows(rows.map((x) => (x.key === r.key ? { ...x, assignment: e.target.value } : x)))
                      }
                    />
                  </td>
                  <td className="px-3 py-1 text-right">
                    <Button variant="quiet" onClick={() => setRows(rows.filter((x) => x.key !== r.key))}>
                      Remove
                    </Button>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
        </ScrollRegion>
        <div>
          <Button onClick={() => setRows([...rows, { key: ++seq, position: '', assignment: '' }])}>Add band</Button>
        </div>
        <Field
          id={`bands-reason-${referenceId}`}
          label="Reason for the change"
          hint="Kept in the audit trail with the old and new band lists."
        >
          <Input id={`bands-reason-${referenceId}`} value={reason} onChange={(e) => setReason(e.target.value)} />
        </Field>
        {problem && <ErrorNote error={problem} />}
        {update.isError && <ErrorNote error={update.error} />}
        <div className="flex gap-2">
          <Button variant="primary" busy={update.isPending} onClick={save}>
            Save bands
          </Button>
          <Button onClick={() => setEditing(false)}>Cancel</Button>
        </div>
      </div>
    );

  return (
    <div className="flex flex-col gap-2">
      <ScrollRegion label="Characteristic bands">
        <table className="w-full text-sm tabular-nums" aria-label="Characteristic bands">
          <thead className="bg-paper">
            <tr>
              <th data-key-column="position" scope="col" className="px-3 py-2 text-right">
                Position
              </th>
              <th data-key-column="assignment" scope="col" className="px-3 py-2 text-left">
                Assignment (set by QA)
              </th>
              <th scope="col" className="px-3 py-2 text-right">
                Relative height
              </th>
              <th scope="col" className="px-3 py-2 text-right">
                Width
              </th>
              <th scope="col" className="px-3 py-2 text-left">
                Origin
              </th>
            </tr>
          </thead>
          <tbody>
            {sorted.map((b) => (
              <tr key={b.position} className="border-t border-line" data-testid="band-row">
                <td className="px-3 py-1.5 text-right whitespace-nowrap">{formatWavenumber(b.position)}</td>
                <td className="px-3 py-1.5" data-testid="band-assignment">
                  {b.shownAssignment ?? <span className="text-muted">not set by QA</span>}
                </td>
                <td className="px-3 py-1.5 text-right">
                  {b.prominence !== undefined ? `${Math.round(b.prominence * 100)} %` : '—'}
                </td>
                <td className="px-3 py-1.5 text-right whitespace-nowrap">
                  {b.width !== undefined ? formatWavenumber(b.width, 0) : '—'}
                </td>
                <td className="px-3 py-1.5">{b.origin === 'edited' ? 'set by QA' : 'picked automatically'}</td>
              </tr>
            ))}
            {sorted.length === 0 && (
              <tr>
                <td colSpan={5} className="px-3 py-4 text-center text-muted">
                  No characteristic bands (band concordance is off in this method, or none reached the threshold).
                </td>
              </tr>
            )}
          </tbody>
        </table>
      </ScrollRegion>
      {editable && (
        <div>
          <Button onClick={start}>Edit bands and assignments</Button>
        </div>
      )}
      {candidates && candidates.length > 0 && <CandidateList candidates={candidates} />}
    </div>
  );
}

/** The correlation table's candidates per band: for QA's information while reviewing a draft, never an assignment. */
function CandidateList({ candidates }: { candidates: BandCandidates[] }) {
  const sorted = [...candidates].sort((a, b) => b.position - a.position);
  return (
    <details className="rounded-md border border-line bg-white px-3 py-2 text-sm" data-testid="band-candidates">
      <summary className="cursor-pointer text-petrol">Correlation-table candidates, for information</summary>
      <p className="mt-2 text-muted">
        Group frequencies whose usual range holds each band, ranked by the partner bands the spectrum shows. They are
        candidates for your judgement, not assignments: only the text you set above is shown in test results and signed
        with the reference.
      </p>
      <ul className="mt-2 flex flex-col gap-1">
        {sorted.map((b) => (
          <li key={b.position}>
            <span className="tabular-nums">{formatWavenumber(b.position)}</span>:{' '}
            {b.candidates.length === 0
              ? 'no common group frequency'
              : b.candidates.map((c, i) => (
                  <span key={i}>
                    {i > 0 && '; '}
                    {c.group}{' '}
                    <span className="text-muted">
                      ({c.range}
                      {c.why ? `; ${c.why}` : ''})
                    </span>
                  </span>
                ))}
          </li>
        ))}
      </ul>
    </details>
  );
}
