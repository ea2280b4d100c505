/**
 * The first of the two QA signatures of a specificity-gate override: a written justification and a
 * change-control reference, signed. A second QA manager (neither the author of the method version
 * nor the uploader of the reference) confirms it by approving (docs/methods.md).
 */
import { useId, useState } from 'react';
import { Field, Input } from '../../../components/Field';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { useRequestGateOverride } from '../api';

export function GateOverrideDialog({
  open,
  kind,
  id,
  label,
  printedName,
  needsUsername,
  onClose,
}: {
  open: boolean;
  kind: 'methods' | 'references';
  id: number;
  label: string;
  printedName: string;
  needsUsername: boolean;
  onClose: () => void;
}) {
  const fieldId = useId();
  const [changeControl, setChangeControl] = useState('');
  const request = useRequestGateOverride(kind);
  return (
    <ReasonSignatureDialog
      open={open}
      title={`Request an override of the specificity gate for ${label}`}
      meaningText={`request that ${label} be approved although the specificity gate refuses it, for the reason written below; a second QA manager must confirm by approving`}
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel="Request override"
      busy={request.isPending}
      error={request.error}
      onCancel={() => {
        request.reset();
        onClose();
      }}
      reason={{
        label: 'Justification',
        hint: 'Why approval is right although the gate does not show the materials apart (at least 20 characters).',
        minLength: 20,
        tooShort: 'Write a justification of at least 20 characters.',
      }}
      onSign={(signature, justification) =>
        request.mutate({ id, signature, justification, changeControl: changeControl.trim() }, { onSuccess: onClose })
      }
    >
      <Field id={`${fieldId}-cc`} label="Change-control reference" hint="The change-control record of this decision.">
        <Input id={`${fieldId}-cc`} value={changeControl} onChange={(e) => setChangeControl(e.target.value)} />
      </Field>
    </ReasonSignatureDialog>
  );
}
