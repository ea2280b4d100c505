/**
 * Upload of reference spectra as drafts: source fields, then several files, each with its own
 * progress bar and outcome (its code and number of bands, or the reason it was refused).
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { Dialog } from '../../../components/Dialog';
import { Field, Input, Textarea } from '../../../components/Field';
import { FileDrop } from '../../../components/FileDrop';
import { uploadReference, useInvalidateLibrary, type ReferenceDetail } from '../api';

export function UploadReferencesDialog({
  open,
  materialId,
  materialLabel,
  onClose,
  onOpenReference,
}: {
  open: boolean;
  materialId: number;
  materialLabel: string;
  onClose: () => void;
  onOpenReference: (id: number) => void;
}) {
  const [fields, setFields] = useState({ supplier: '', supplierLot: '', measuredHow: '' });
  const invalidate = useInvalidateLibrary();
  return (
    <Dialog
      open={open}
      onClose={onClose}
      title="Upload reference spectra"
      description={`${materialLabel}. Each file becomes a draft reference; another QA manager approves it.`}
      width="lg"
    >
      <div className="grid gap-3 sm:grid-cols-2">
        <Field id="up-supplier" label="Supplier">
          <Input
            id="up-supplier"
            value={fields.supplier}
            onChange={(e) => setFields({ ...fields, supplier: e.target.value })}
          />
        </Field>
        <Field id="up-lot" label="Supplier lot">
          <Input
            id="up-lot"
            value={fields.supplierLot}
            onChange={(e) => setFields({ ...fields, supplierLot: e.target.value })}
          />
        </Field>
        <Field
          id="up-how"
          label="How it was measured"
          hint="Instrument, accessory, resolution, scans, sample preparation."
          className="sm:col-span-2"
        >
          <Textarea
            id="up-how"
            value={fields.measuredHow}
            onChange={(e) => setFields({ ...fields, measuredHow: e.target.value })}
          />
        </Field>
      </div>
      <FileDrop<ReferenceDetail>
        label="Reference spectrum files"
        accept=".jdx,.dx,.jcamp,.jcm,.csv,.txt,.tsv"
        hint="JCAMP-DX or delimited text (CSV, TSV, semicolon); several at once."
        upload={(file, onProgress) => uploadReference(materialId, file, fields, onProgress)}
        onBatchDone={() => void invalidate()}
        renderResult={(r) => (
          <span className="text-sm">
            Stored as draft{' '}
            <button
              type="button"
              className="font-medium text-petrol underline underline-offset-2"
              onClick={() => onOpenReference(r.id)}
            >
              {r.code}
            </button>{' '}
            with {r.bands.length} characteristic bands.
          </span>
        )}
      />
      <div className="flex justify-end">
        <Button onClick={onClose}>Close</Button>
      </div>
    </Dialog>
  );
}
