/**
 * Several files at once: the files are matched to containers by the label in their names, a
 * confirmation table shows which file goes where (nothing is stored yet), and only after
 * confirmation are the matched files uploaded, each with its own progress and result.
 * A file whose name holds no container label (e.g. an instrument's "lot-G-c3.jdx") is assigned by
 * hand: a container list per file, pre-set when the name ends in a container number ("c3", "-003"),
 * marked as a suggestion to check. One container takes one file; the server checks every upload.
 */
import { useId, useRef, useState } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Verdict } from '../../../components/Verdict';
import { errorMessage } from '../../../lib/api';
import { formatBytes, formatScore } from '../../../lib/format';
import { MATCH_STATUS_TEXT } from '../../../../server/modules/testing/contract';
import { uploadMeasurement, useMatchFiles, type MatchRow, type TestDetail, type UploadResult } from '../api';
import { verdictLabel } from './MeasurementResult';

interface Row extends MatchRow {
  file: File;
  state: 'ready' | 'skipped' | 'uploading' | 'done' | 'failed';
  fraction: number;
  result?: UploadResult;
  error?: string;
  /** the file names no container: the operator picks one (null: not yet) */
  manual: boolean;
  assigned: number | null;
  suggested: boolean;
}

/** Statuses whose file may be assigned by hand: the name holds no usable label of this lot. */
const ASSIGNABLE = new Set(['no-label', 'unknown-label']);

/** A container number at the end of a file name ("lot-G-c3.jdx", "sample_003.csv"), or null. */
export function containerNumberInName(fileName: string): number | null {
  const base = fileName.replace(/^.*[\\/]/, '').replace(/\.[^.]*$/, '');
  const m = /(?:^|[^a-z0-9])(?:c|container)?[-_ ]?0*(\d{1,3})$/i.exec(base);
  return m ? Number(m[1]) : null;
}

/** The container a row uploads to, or null. */
function target(r: Row): number | null {
  return r.manual ? r.assigned : r.status === 'matched' ? r.containerId : null;
}

export function MultiFileUpload({ test, onUploaded }: { test: TestDetail; onUploaded: () => void }) {
  const id = useId();
  const fileInput = useRef<HTMLInputElement>(null);
  const match = useMatchFiles(test.id);
  const [rows, setRows] = useState<Row[] | null>(null);
  const [running, setRunning] = useState(false);

  const assignable = test.containers.filter((c) => c.inScope && c.latest?.verdict !== 'fail');
  const choose = (files: File[]) => {
    if (!files.length) return;
    match.mutate(
      files.map((f) => f.name),
      {
        onSuccess: (m) => {
          const taken = new Set(m.filter((r) => r.status === 'matched').map((r) => r.containerId));
          setRows(
            m.map((r, i) => {
              const manual = ASSIGNABLE.has(r.status);
              const n = manual ? containerNumberInName(r.fileName) : null;
              const label = n === null ? null : `${test.lot.lotNumber}-${String(n).padStart(3, '0')}`;
              const guess = assignable.find((c) => c.label === label && !taken.has(c.id)) ?? null;
              if (guess) taken.add(guess.id);
              return {
                ...r,
                file: files[i],
                state: r.status === 'matched' || guess ? 'ready' : 'skipped',
                fraction: 0,
                manual,
                assigned: guess?.id ?? null,
                suggested: guess !== null,
              };
            }),
          );
        },
      },
    );
  };
  const assign = (i: number, containerId: number | null) =>
    patch(i, { assigned: containerId, suggested: false, state: containerId ? 'ready' : 'skipped' });
  // One container takes one file: rows aiming at the same container wait until that is resolved.
  const counts = new Map<number, number>();
  for (const r of rows ?? []) {
    const c = target(r);
    if (c && r.state === 'ready') counts.set(c, (counts.get(c) ?? 0) + 1);
  }
  const clash = (r: Row) => {
    const c = target(r);
    return c !== null && r.state === 'ready' && (counts.get(c) ?? 0) > 1;
  };
  const patch = (i: number, p: Partial<Row>) => setRows((rs) => rs && rs.map((r, k) => (k === i ? { ...r, ...p } : r)));

  const uploadAll = async () => {
    if (!rows) return;
    setRunning(true);
    const todo = rows.map((r, i) => ({ r, i })).filter((x) => x.r.state === 'ready' && !clash(x.r));
    let next = 0;
    const worker = async () => {
      while (next < todo.length) {
        const { r, i } = todo[next++];
        patch(i, { state: 'uploading' });
        try {
          const result = await uploadMeasurement(test.id, { containerId: target(r)! }, r.file, (p) =>
            patch(i, { fraction: p.fraction }),
          );
          patch(i, { state: 'done', fraction: 1, result });
        } catch (e) {
          patch(i, { state: 'failed', error: errorMessage(e) });
        }
      }
    };
    await Promise.all([worker(), worker(), worker()]);
    setRunning(false);
    onUploaded();
  };

  const ready = rows?.filter((r) => r.state === 'ready' && !clash(r)).length ?? 0;
  const anyManual = rows?.some((r) => r.manual && r.state === 'ready') ?? false;
  const finished =
    rows !== null && rows.every((r) => r.state === 'done' || r.state === 'failed' || r.state === 'skipped');
  return (
    <div className="flex flex-col gap-3">
      {!rows && (
        <div className="flex flex-col items-start gap-2 rounded-lg border-2 border-dashed border-line bg-white px-4 py-5">
          <p className="font-medium">Several spectrum files at once</p>
          <p className="text-sm text-muted">
            Each file name must contain its container label, e.g. {test.lot.lotNumber}-002.csv. You confirm the matching
            before anything is stored.
          </p>
          {/* A real button: Enter opens the chooser (the input itself is hidden and out of the tab order). */}
          <button
            type="button"
            onClick={() => fileInput.current?.click()}
            className="inline-flex min-h-11 cursor-pointer items-center rounded-md border border-petrol bg-petrol px-4 font-medium text-white hover:bg-petrol-dark"
          >
            Choose files
          </button>
          <input
            ref={fileInput}
            id={id}
            tabIndex={-1}
            aria-label="Choose files: spectrum files of several containers"
            type="file"
            multiple
            className="sr-only"
            accept=".jdx,.dx,.jcamp,.csv,.txt,.tsv"
            onChange={(e) => {
              const files = Array.from(e.target.files ?? []);
              e.target.value = '';
              choose(files);
            }}
            data-testid="multi-file-input"
          />
          {match.isPending && <p className="text-sm text-muted">Matching file names to containers…</p>}
          {match.isError && <ErrorNote error={match.error} />}
        </div>
      )}
      {rows && (
        <>
          <table className="w-full text-sm" aria-label="Files and containers">
            <thead>
              <tr className="border-b border-line text-left text-muted">
                <th data-key-column="file" className="py-1 pr-3 font-medium">
                  File
                </th>
                <th data-key-column="container" className="py-1 pr-3 font-medium">
                  Container
                </th>
                <th className="py-1 pr-3 font-medium">Matching</th>
                <th data-key-column="result" className="py-1 font-medium">
                  Upload and result
                </th>
              </tr>
            </thead>
            <tbody>
              {rows.map((r, i) => (
                <tr key={`${r.fileName}-${i}`} className="border-b border-line/60 align-top" data-state={r.state}>
                  <td className="py-1.5 pr-3">
                    <div className="font-medium break-all">{r.fileName}</div>
                    <div className="text-xs text-muted">{formatBytes(r.file.size)}</div>
                  </td>
                  <td className="py-1.5 pr-3 whitespace-nowrap tabular-nums">
                    {r.manual && (r.state === 'ready' || r.state === 'skipped') ? (
                      <select
                        aria-label={`Container for ${r.fileName}`}
                        value={r.assigned ?? ''}
                        onChange={(e) => assign(i, e.target.value ? Number(e.target.value) : null)}
                        className="min-h-11 rounded-md border border-line bg-white px-2"
                      >
                        <option value="">Choose a container</option>
                        {assignable.map((c) => (
                          <option key={c.id} value={c.id}>
                            {c.label}
                          </option>
                        ))}
                      </select>
                    ) : r.manual ? (
                      (assignable.find((c) => c.id === r.assigned)?.label ?? '—')
                    ) : (
                      (r.label ?? '—')
                    )}
                  </td>
                  <td className={`py-1.5 pr-3 ${r.status === 'matched' && !clash(r) ? '' : 'text-amber-ink'}`}>
                    {clash(r)
                      ? 'Another file goes to this container: choose one'
                      : r.status === 'matched'
                        ? 'Ready'
                        : r.manual && r.assigned
                          ? r.suggested
                            ? 'Assigned: suggested from the file name, check it'
                            : 'Assigned by hand'
                          : r.manual
                            ? `${MATCH_STATUS_TEXT[r.status]}: choose its container`
                            : `Not uploaded: ${MATCH_STATUS_TEXT[r.status]}`}
                  </td>
                  <td className="py-1.5">
                    {r.state === 'uploading' && (
                      <progress
                        className="h-1.5 w-40 accent-petrol"
                        max={1}
                        value={r.fraction}
                        aria-label={`Upload of ${r.fileName}`}
                      />
                    )}
                    {r.state === 'done' && r.result && (
                      <span className="inline-flex items-center gap-2">
                        <Verdict verdict={r.result.verdict} label={verdictLabel(r.result.verdict)} size="sm" />
                        <span className="text-muted tabular-nums">{formatScore(r.result.matchScore)}</span>
                      </span>
                    )}
                    {r.state === 'failed' && (
                      <span role="alert" className="text-fail">
                        {r.error}
                      </span>
                    )}
                    {r.state === 'ready' && <span className="text-muted">waiting for confirmation</span>}
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          <div className="flex flex-wrap gap-2">
            {!finished && (
              <Button
                size="bench"
                variant="primary"
                disabled={ready === 0}
                busy={running}
                onClick={() => void uploadAll()}
              >
                Upload {ready} {anyManual ? 'assigned' : 'matched'} file{ready === 1 ? '' : 's'}
              </Button>
            )}
            <Button size="bench" disabled={running} onClick={() => setRows(null)}>
              {finished ? 'Choose more files' : 'Cancel'}
            </Button>
          </div>
        </>
      )}
    </div>
  );
}
