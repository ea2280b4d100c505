/** Retirement of a reference: a reason and an e-signature; nothing is deleted. */
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { useRetireReference } from '../api';
import type { ReferenceDialogProps } from './reference-dialog';

export function RetireReferenceDialog({
  open,
  referenceId,
  code,
  printedName,
  needsUsername,
  onClose,
}: ReferenceDialogProps) {
  const retire = useRetireReference();
  return (
    <ReasonSignatureDialog
      open={open}
      title={`Retire reference ${code}`}
      meaningText={`retire reference ${code}: it will no longer be used for identity testing; it stays on record`}
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel="Retire reference"
      busy={retire.isPending}
      error={retire.error}
      onCancel={() => {
        retire.reset();
        onClose();
      }}
      reason={{ label: 'Reason', minLength: 3, tooShort: 'Give the reason for retiring this reference.' }}
      onSign={(signature, reason) => retire.mutate({ id: referenceId, signature, reason }, { onSuccess: onClose })}
    />
  );
}
