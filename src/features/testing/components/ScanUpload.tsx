/**
 * One container at a time: scan its label (the scanner types the label and presses Enter) or
 * pick it from the list, then drop or choose its spectrum file. The result shows at once.
 */
import { useEffect, useRef, useState, type FormEvent } from 'react';
import { Button } from '../../../components/Button';
import { Field, Input, Textarea } from '../../../components/Field';
import { FileDrop } from '../../../components/FileDrop';
import { Verdict } from '../../../components/Verdict';
import { formatScore } from '../../../lib/format';
import { uploadMeasurement, type TestDetail, type UploadResult } from '../api';
import { verdictLabel } from './MeasurementResult';

export function ScanUpload({
  test,
  selectedId,
  onSelect,
  onUploaded,
}: {
  test: TestDetail;
  selectedId: number | null;
  onSelect: (id: number | null) => void;
  onUploaded: (r: UploadResult) => void;
}) {
  const [code, setCode] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  const [reason, setReason] = useState('');
  const [confirmIds, setConfirmIds] = useState(false);
  const scan = useRef<HTMLInputElement>(null);
  const selected = test.containers.find((c) => c.id === selectedId) ?? null;

  useEffect(() => {
    if (!selected) scan.current?.focus();
  }, [selected]);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    const label = code.trim().toUpperCase();
    if (!label) return;
    const c = test.containers.find((x) => x.label.toUpperCase() === label);
    if (!c)
      setProblem(`No container of lot ${test.lot.lotNumber} has the label ${label}. Check the label and scan again.`);
    else if (!c.inScope)
      setProblem(
        `Container ${c.label} is not part of this retest: QA authorised only the containers named in the investigation.`,
      );
    else if (c.latest?.verdict === 'fail')
      setProblem(
        `Container ${c.label} failed in this attempt. A retest needs QA authorisation through an investigation.`,
      );
    else {
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
              <Textarea id="remeasure-reason" value={reason} onChange={(e) => setReason(e.target.value)} />
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
            upload={(file, onProgress) =>
              uploadMeasurement(
                test.id,
                { containerId: selected.id, reason: reason.trim() || undefined, confirmIdentifiers: confirmIds },
                file,
                onProgress,
              )
            }
            onUploaded={(_f, r) => onUploaded(r)}
            renderResult={(r) => (
              <div className="flex items-center gap-3">
                <Verdict verdict={r.verdict} label={verdictLabel(r.verdict)} />
                <span className="text-sm text-muted">match score {formatScore(r.matchScore)}</span>
              </div>
            )}
          />
        </section>
      )}
    </div>
  );
}
