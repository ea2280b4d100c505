/**
 * What every approval of a check specification or of check limits shares: QA's e-signature with a
 * written justification (at least 20 characters, signed with the specification), a problem with
 * the entries in words, and closing once the specification is stored.
 */
import { useEffect, useState, type ReactNode } from 'react';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { useApproveSpec, type InstrumentDetail, type SpecCreateInput } from '../api';

/** What the page hands to an approval dialog. */
export interface ApprovalDialogProps {
  open: boolean;
  instrument: InstrumentDetail;
  printedName: string;
  needsUsername: boolean;
  onClose: () => void;
}

export function SpecApprovalDialog({
  open,
  instrument,
  printedName,
  needsUsername,
  onClose,
  title,
  meaningText,
  confirmLabel,
  hint,
  spec,
  children,
}: ApprovalDialogProps & {
  title: string;
  meaningText: string;
  confirmLabel: string;
  /** the justification's hint */
  hint: string;
  /** the specification to send with the justification, or the sentence that says what is wrong */
  spec: (justification: string) => SpecCreateInput | string;
  children: ReactNode;
}) {
  const approve = useApproveSpec();
  const [problem, setProblem] = useState<string | null>(null);
  useEffect(() => {
    if (open) setProblem(null);
  }, [open]);
  return (
    <ReasonSignatureDialog
      open={open}
      title={title}
      meaningText={meaningText}
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel={confirmLabel}
      busy={approve.isPending}
      error={problem ?? approve.error}
      onCancel={() => {
        approve.reset();
        onClose();
      }}
      reason={{
        label: 'Justification',
        hint,
        minLength: 20,
        tooShort: 'Write a justification of at least 20 characters.',
      }}
      onSign={(signature, justification) => {
        const made = spec(justification);
        if (typeof made === 'string') return setProblem(made);
        setProblem(null);
        approve.mutate({ id: instrument.id, spec: made, signature }, { onSuccess: onClose });
      }}
    >
      {children}
    </ReasonSignatureDialog>
  );
}
