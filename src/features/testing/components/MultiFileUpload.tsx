/**
 * Several files at once: the files are matched to containers by the label in their names, a
 * confirmation table shows which file goes where (nothing is stored yet), and only after
 * confirmation are the matched files uploaded, each with its own progress and result.
 */
import { useId, useState } from 'react';
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
}

export function MultiFileUpload({ test, onUploaded }: { test: TestDetail; onUploaded: () => void }) {
  const id = useId();
  const match = useMatchFiles(test.id);
  const [rows, setRows] = useState<Row[] | null>(null);
  const [running, setRunning] = useState(false);

  const choose = (files: File[]) => {
    if (!files.length) return;
    match.mutate(
      files.map((f) => f.name),
      {
        onSuccess: (m) =>
          setRows(
            m.map((r, i) => ({
              ...r,
              file: files[i],
              state: r.status === 'matched' ? 'ready' : 'skipped',
              fraction: 0,
            })),
          ),
      },
    );
  };
  const patch = (i: number, p: Partial<Row>) => setRows((rs) => rs && rs.map((r, k) => (k === i ? { ...r, ...p } : r)));

  const uploadAll = async () => {
    if (!rows) return;
    setRunning(true);
    const todo = rows.map((r, i) => ({ r, i })).filter((x) => x.r.state === 'ready');
    let next = 0;
    const worker = async () => {
      while (next < todo.length) {
        const { r, i } = todo[next++];
        patch(i, { state: 'uploading' });
        try {
          const result = await uploadMeasurement(test.id, { containerId: r.containerId! }, r.file, (p) =>
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

  const ready = rows?.filter((r) => r.state === 'ready').length ?? 0;
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
          <label
            htmlFor={id}
            className="inline-flex min-h-11 cursor-pointer items-center rounded-md border border-petrol bg-petrol px-4 font-medium text-white hover:bg-petrol-dark"
          >
            Choose files
          </label>
          <input
            id={id}
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
                  <td className="py-1.5 pr-3 whitespace-nowrap tabular-nums">{r.label ?? '—'}</td>
                  <td className={`py-1.5 pr-3 ${r.status === 'matched' ? '' : 'text-amber-ink'}`}>
                    {r.status === 'matched' ? 'Ready' : `Not uploaded: ${MATCH_STATUS_TEXT[r.status]}`}
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
                Upload {ready} matched file{ready === 1 ? '' : 's'}
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
