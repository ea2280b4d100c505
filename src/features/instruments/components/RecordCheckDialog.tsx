/**
 * Instrument check by the operator: choose the check type (those with an approved
 * specification) and its spectrum (polystyrene film, clean-crystal blank, noise spectrum, NIR
 * wavelength standard or the reference measured against itself), sign (meaning
 * "instrument check"); the file is uploaded with progress and judged against the instrument's
 * approved specification. The outcome is shown at once.
 */
import { useEffect, useEffectEvent, useState } from 'react';
import { Field, Select } from '../../../components/Field';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { Verdict } from '../../../components/Verdict';
import { CHECK_TYPE_LABELS, useRecordCheck, type CheckType, type InstrumentCheck } from '../api';

export function RecordCheckDialog({
  open,
  instrumentId,
  instrumentName,
  checkTypes,
  printedName,
  needsUsername,
  onClose,
  onRecorded,
}: {
  open: boolean;
  instrumentId: number;
  instrumentName: string;
  /** the check types with an approved specification on this instrument */
  checkTypes: CheckType[];
  printedName: string;
  needsUsername: boolean;
  onClose: () => void;
  onRecorded: (c: InstrumentCheck) => void;
}) {
  const [file, setFile] = useState<File | null>(null);
  const [checkType, setCheckType] = useState<CheckType>(checkTypes[0] ?? 'polystyrene');
  const [fraction, setFraction] = useState(0);
  const [problem, setProblem] = useState<string | null>(null);
  const record = useRecordCheck();
  const start = useEffectEvent(() => {
    setFile(null);
    setCheckType(checkTypes[0] ?? 'polystyrene');
    setFraction(0);
    setProblem(null);
    record.reset();
  });
  useEffect(() => {
    if (open) start();
  }, [open]);
  return (
    <SignatureDialog
      open={open}
      title={`Instrument check of ${instrumentName}`}
      meaningText={`measured the ${CHECK_TYPE_LABELS[checkType]} check spectrum on ${instrumentName} and recorded this instrument check`}
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel="Sign and record check"
      busy={record.isPending}
      error={problem ?? record.error}
      onCancel={onClose}
      onSign={(signature) => {
        if (!file) return setProblem('Choose the check spectrum file first.');
        setProblem(null);
        record.mutate(
          { id: instrumentId, checkType, file, signature, onProgress: (p) => setFraction(p.fraction) },
          { onSuccess: (c) => onRecorded(c) },
        );
      }}
    >
      <Field id={`check-type-${instrumentId}`} label="Check">
        <Select
          id={`check-type-${instrumentId}`}
          value={checkType}
          onChange={(e) => setCheckType(e.target.value as CheckType)}
        >
          {checkTypes.map((t) => (
            <option key={t} value={t}>
              {CHECK_TYPE_LABELS[t]}
            </option>
          ))}
        </Select>
      </Field>
      <Field
        id={`check-file-${instrumentId}`}
        label="Check spectrum"
        hint="JCAMP-DX or delimited text, as exported by the instrument."
      >
        <input
          id={`check-file-${instrumentId}`}
          type="file"
          accept=".jdx,.dx,.jcamp,.csv,.txt,.tsv"
          className="block min-h-11 text-sm file:mr-3 file:min-h-11 file:rounded-md file:border file:border-petrol file:bg-petrol file:px-4 file:text-white"
          onChange={(e) => setFile(e.target.files?.[0] ?? null)}
        />
      </Field>
      {record.isPending && (
        <progress className="h-1.5 w-full accent-petrol" max={1} value={fraction} aria-label="Upload progress" />
      )}
      {record.isSuccess && <Verdict verdict={record.data.verdict} size="lg" />}
    </SignatureDialog>
  );
}
