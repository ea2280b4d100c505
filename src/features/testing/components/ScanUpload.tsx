/**
 * One container at a time: scan its label (the scanner types the label and presses Enter) or
 * pick it from the list, then drop or choose its spectrum file. The result shows at once.
 * Hands-free loop: a scanned label moves the focus to "Choose a file" (Enter opens the chooser);
 * once the result is in, the focus is back in the scan field, so the next label is never lost.
 * A container that cannot be measured now (failed, outside a retest) is refused at selection,
 * by scan or by the list's "Select", before any file is chosen.
 */
import { useEffect, useRef, useState, type FormEvent } from 'react';
import { Button } from '../../../components/Button';
import { Field, Input, Textarea } from '../../../components/Field';
import { FileDrop } from '../../../components/FileDrop';
import { Verdict } from '../../../components/Verdict';
import { formatScore } from '../../../lib/format';
import { uploadMeasurement, type TestDetail, type UploadResult } from '../api';
import { verdictLabel } from './MeasurementResult';

type Container = TestDetail['containers'][number];

/** Why this container cannot be selected for a measurement now, or null. */
export function selectionProblem(test: TestDetail, c: Container): string | null {
  if (!c.inScope)
    return `Container ${c.label} is not part of this retest: QA authorised only the containers named in the investigation.`;
  if (c.latest?.verdict === 'fail')
    return `Container ${c.label} failed in this attempt. A retest needs QA authorisation through an investigation.`;
  return null;
}

export function ScanUpload({
  test,
  selectedId,
  onSelect,
  onUploaded,
  problem,
  onProblem,
}: {
  test: TestDetail;
  selectedId: number | null;
  onSelect: (id: number | null) => void;
  onUploaded: (r: UploadResult) => void;
  /** a refusal of the last selection (by scan here, or by the container list) */
  problem: string | null;
  onProblem: (p: string | null) => void;
}) {
  const [code, setCode] = useState('');
  const setProblem = onProblem;
  const [reason, setReason] = useState('');
  const [confirmIds, setConfirmIds] = useState(false);
  const scan = useRef<HTMLInputElement>(null);
  const selected = test.containers.find((c) => c.id === selectedId) ?? null;

  useEffect(() => {
    if (!selected) scan.current?.focus();
  }, [selected]);

  // Whether the container had already passed when it was selected: only then does the reason field
  // take the focus. A pass that comes in while it stays selected leaves the focus in the scan field.
  const [passedAtSelection, setPassedAtSelection] = useState<number | null>(null);
  const remeasure = selected !== null && passedAtSelection === selected.id;
  useEffect(() => {
    const c = test.containers.find((x) => x.id === selectedId);
    setPassedAtSelection(c?.latest?.verdict === 'pass' ? c.id : null);
    setReason('');
    // only on a new selection, not when the test is refetched after an upload
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [selectedId]);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    const label = code.trim().toUpperCase();
    if (!label) return;
    const c = test.containers.find((x) => x.label.toUpperCase() === label);
    const refusal = c
      ? selectionProblem(test, c)
      : `No container of lot ${test.lot.lotNumber} has the label ${label}. Check the label and scan again.`;
    if (refusal || !c) {
      setProblem(refusal);
      onSelect(null);
      scan.current?.focus();
    } else {
      setProblem(null);
      onSelect(c.id);
    }
    setCode('');
  };

  return (
    <div className="flex flex-col gap-3">
      <form onSubmit={submit} className="flex flex-wrap items-end gap-3" aria-label="Scan a container label">
        <Field id="scan" label="Scan or type the container label, then Enter" className="min-w-64 flex-1">
          <Input
            id="scan"
            ref={scan}
            bench
            autoComplete="off"
            spellCheck={false}
            placeholder={`${test.lot.lotNumber}-001`}
            value={code}
            onChange={(e) => setCode(e.target.value)}
          />
        </Field>
        <Button type="submit" size="bench">
          Select container
        </Button>
      </form>
      {problem && (
        <p role="alert" className="text-sm text-fail">
          {problem}
        </p>
      )}
      {selected && (
        <section
          aria-label={`Upload for ${selected.label}`}
          className="rounded-md border border-petrol/40 bg-petrol-soft/40 p-3"
        >
          <div className="mb-2 flex flex-wrap items-center justify-between gap-2">
            <p className="text-lg font-medium" data-testid="selected-container">
              Container {selected.label}
            </p>
            <Button size="bench" variant="quiet" onClick={() => onSelect(null)}>
              Choose another container
            </Button>
          </div>
          {selected.latest?.verdict === 'pass' && (
            <Field
              id="remeasure-reason"
              label={`Container ${selected.label} already passed in this attempt: why measure it again?`}
              hint="Kept with the new measurement and shown to the verifier."
              className="mb-2"
            >
              <Textarea
                id="remeasure-reason"
                autoFocus={remeasure}
                value={reason}
                onChange={(e) => setReason(e.target.value)}
              />
            </Field>
          )}
          <label className="mb-2 flex items-start gap-2 text-sm">
            <input
              type="checkbox"
              className="mt-1"
              checked={confirmIds}
              onChange={(e) => setConfirmIds(e.target.checked)}
            />
            <span>
              If the file&apos;s own title or sample identifier names another container, lot or material: I confirm this
              spectrum was measured on container {selected.label}.
            </span>
          </label>
          <FileDrop
            key={selected.id}
            bench
            multiple={false}
            label={`Spectrum file of ${selected.label}`}
            accept=".jdx,.dx,.jcamp,.csv,.txt,.tsv"
            hint="JCAMP-DX or CSV export of the instrument."
            // A container measured again first asks why (the reason field takes the focus).
            autoFocus={!remeasure}
            upload={(file, onProgress) =>
              uploadMeasurement(
                test.id,
                { containerId: selected.id, reason: reason.trim() || undefined, confirmIdentifiers: confirmIds },
                file,
                onProgress,
              )
            }
            onUploaded={(_f, r) => onUploaded(r)}
            // Result or refusal in: back to the scan field for the next label.
            onBatchDone={() => scan.current?.focus()}
            renderResult={(r) => (
              <div className="flex items-center gap-3">
                <Verdict verdict={r.verdict} label={verdictLabel(r.verdict)} />
                <span className="text-sm text-muted">correlation coefficient (r) {formatScore(r.matchScore)}</span>
              </div>
            )}
          />
        </section>
      )}
    </div>
  );
}
