/**
 * Drop or choose several files; each is uploaded with its own progress bar and ends with either
 * the result (renderResult) or the server's sentence saying what is wrong with that file.
 * The upload itself comes from the feature's api module (a function using apiUpload), so this
 * component never talks to the server on its own:
 *   <FileDrop label="Spectrum files" accept=".jdx,.dx,.jcamp,.csv,.txt"
 *             upload={(file, onProgress) => uploadMeasurement(lotId, file, onProgress)}
 *             renderResult={(r) => <Verdict verdict={r.verdict} />} onUploaded={() => refetch()} />
 */
import { useId, useRef, useState, type DragEvent, type ReactNode } from 'react';
import { errorMessage, type UploadProgress } from '../lib/api';
import { formatBytes } from '../lib/format';

type Status = 'waiting' | 'uploading' | 'done' | 'failed';

interface Item<R> {
  key: string;
  file: File;
  status: Status;
  fraction: number;
  result?: R;
  error?: string;
}

export interface FileDropProps<R> {
  /** what to drop, in words ("Spectrum files of the containers") */
  label: string;
  /** file types offered by the chooser, e.g. ".jdx,.dx,.csv,.txt" */
  accept?: string;
  multiple?: boolean;
  /** uploads one file; reject with an ApiError to show the server's sentence */
  upload: (file: File, onProgress: (p: UploadProgress) => void) => Promise<R>;
  onUploaded?: (file: File, result: R) => void;
  /** called once every file of a drop has finished (some may have failed) */
  onBatchDone?: (results: { file: File; result?: R; error?: string }[]) => void;
  renderResult?: (result: R, file: File) => ReactNode;
  /** at most this many uploads at a time */
  concurrency?: number;
  /** large targets for bench screens */
  bench?: boolean;
  disabled?: boolean;
  hint?: ReactNode;
  /** focus the "Choose" button when shown (the scan loop: label scanned, Enter opens the chooser) */
  autoFocus?: boolean;
}

let seq = 0;

export function FileDrop<R>({
  label,
  accept,
  multiple = true,
  upload,
  onUploaded,
  onBatchDone,
  renderResult,
  concurrency = 3,
  bench,
  disabled,
  hint,
  autoFocus,
}: FileDropProps<R>) {
  const id = useId();
  const input = useRef<HTMLInputElement>(null);
  const [items, setItems] = useState<Item<R>[]>([]);
  const [over, setOver] = useState(false);

  const patch = (key: string, p: Partial<Item<R>>) =>
    setItems((list) => list.map((i) => (i.key === key ? { ...i, ...p } : i)));

  const start = async (files: File[]) => {
    if (disabled || files.length === 0) return;
    const batch: Item<R>[] = files.map((file) => ({ key: `f${++seq}`, file, status: 'waiting', fraction: 0 }));
    setItems((list) => [...batch, ...list]);
    const results: { file: File; result?: R; error?: string }[] = [];
    let next = 0;
    const worker = async () => {
      while (next < batch.length) {
        const it = batch[next++];
        patch(it.key, { status: 'uploading' });
        try {
          const result = await upload(it.file, (p) => patch(it.key, { fraction: p.fraction }));
          patch(it.key, { status: 'done', fraction: 1, result });
          results.push({ file: it.file, result });
          onUploaded?.(it.file, result);
        } catch (e) {
          const error = errorMessage(e);
          patch(it.key, { status: 'failed', error });
          results.push({ file: it.file, error });
        }
      }
    };
    await Promise.all(Array.from({ length: Math.min(concurrency, batch.length) }, worker));
    onBatchDone?.(results);
  };

  const onDrop = (e: DragEvent) => {
    e.preventDefault();
    setOver(false);
    const files = Array.from(e.dataTransfer.files);
    void start(multiple ? files : files.slice(0, 1));
  };

  return (
    <div className="flex flex-col gap-3">
      <div
        onDragOver={(e) => {
          e.preventDefault();
          if (!disabled) setOver(true);
        }}
        onDragLeave={() => setOver(false)}
        onDrop={onDrop}
        className={`flex flex-col items-center justify-center gap-2 rounded-lg border-2 border-dashed px-4 text-center ${bench ? 'py-8' : 'py-5'} ${
          over ? 'border-petrol bg-petrol-soft' : 'border-line bg-white'
        } ${disabled ? 'opacity-50' : ''}`}
      >
        <p className={`font-medium ${bench ? 'text-lg' : ''}`}>{label}</p>
        <p className="text-sm text-muted">Drop {multiple ? 'files' : 'a file'} here, or</p>
        {/* A real button: Enter and Space open the chooser, and it shows the focus ring. */}
        <button
          type="button"
          autoFocus={autoFocus}
          disabled={disabled}
          onClick={() => input.current?.click()}
          aria-describedby={`${id}-what`}
          className={`inline-flex cursor-pointer items-center rounded-md border border-petrol bg-petrol px-4 font-medium text-white hover:bg-petrol-dark ${
            bench ? 'min-h-11 text-base' : 'min-h-9 text-sm'
          } ${disabled ? 'pointer-events-none' : ''}`}
        >
          Choose {multiple ? 'files' : 'a file'}
        </button>
        <span id={`${id}-what`} className="sr-only">
          {label}
        </span>
        <input
          ref={input}
          id={id}
          type="file"
          tabIndex={-1}
          aria-label={`Choose ${multiple ? 'files' : 'a file'}: ${label}`}
          className="sr-only"
          accept={accept}
          multiple={multiple}
          disabled={disabled}
          onChange={(e) => {
            const files = Array.from(e.target.files ?? []);
            e.target.value = '';
            void start(files);
          }}
        />
        {hint && <p className="text-xs text-muted">{hint}</p>}
      </div>
      {items.length > 0 && (
        <ul className="flex flex-col gap-2" aria-label="Uploads">
          {items.map((it) => (
            <li
              key={it.key}
              className={`rounded-md border bg-white px-3 py-2 ${it.status === 'failed' ? 'border-fail/50' : 'border-line'}`}
              data-status={it.status}
            >
              <div className="flex flex-wrap items-center justify-between gap-2 text-sm">
                <span className="min-w-0 truncate font-medium">{it.file.name}</span>
                <span className="text-muted tabular-nums">
                  {formatBytes(it.file.size)} ·{' '}
                  {it.status === 'waiting'
                    ? 'waiting'
                    : it.status === 'uploading'
                      ? it.fraction >= 1
                        ? 'checking…'
                        : `${Math.round(it.fraction * 100)} %`
                      : it.status === 'done'
                        ? 'uploaded'
                        : 'refused'}
                </span>
              </div>
              {(it.status === 'uploading' || it.status === 'waiting') && (
                <progress
                  className="mt-1 h-1.5 w-full accent-petrol"
                  max={1}
                  value={it.fraction}
                  aria-label={`Upload of ${it.file.name}`}
                />
              )}
              {it.status === 'failed' && (
                <p role="alert" className="mt-1 text-sm text-fail">
                  {it.error}
                </p>
              )}
              {it.status === 'done' && it.result !== undefined && renderResult && (
                <div className="mt-1">{renderResult(it.result, it.file)}</div>
              )}
            </li>
          ))}
        </ul>
      )}
    </div>
  );
}
