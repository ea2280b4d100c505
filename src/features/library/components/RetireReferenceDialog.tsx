/** Retirement of a reference: a reason and an e-signature; nothing is deleted. */
import { useEffect, useState } from 'react';
import { Field, Textarea } from '../../../components/Field';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { useRetireReference } from '../api';

export function RetireReferenceDialog({
  open,
  referenceId,
  code,
  printedName,
  needsUsername,
  onClose,
}: {
  open: boolean;
  referenceId: number;
  code: string;
  printedName: string;
  needsUsername: boolean;
  onClose: () => void;
}) {
  const retire = useRetireReference();
  const [reason, setReason] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  useEffect(() => {
    if (open) {
      setReason('');
      setProblem(null);
      retire.reset();
    }
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [open]);
  return (
    <SignatureDialog
      open={open}
      title={`Retire reference ${code}`}
      meaningText={`retire reference ${code}: it will no longer be used for identity testing; it stays on record`}
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel="Retire reference"
      busy={retire.isPending}
      error={problem ?? retire.error}
      onCancel={onClose}
      onSign={(signature) => {
        if (reason.trim().length < 3) return setProblem('Give the reason for retiring this reference.');
        setProblem(null);
        retire.mutate({ id: referenceId, signature, reason: reason.trim() }, { onSuccess: onClose });
      }}
    >
      <Field id={`retire-${referenceId}`} label="Reason">
        <Textarea id={`retire-${referenceId}`} value={reason} onChange={(e) => setReason(e.target.value)} />
      </Field>
    </SignatureDialog>
  );
}
