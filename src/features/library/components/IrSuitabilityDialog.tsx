/** QA's signed decision that identity by IR does not suit a material (with the test that replaces it), or suits it again. */
import { useId, useState } from 'react';
import { Field, Textarea } from '../../../components/Field';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { useDecideIrSuitability } from '../api';

export function IrSuitabilityDialog({
  open,
  materialId,
  label,
  markUnsuitable,
  printedName,
  needsUsername,
  onClose,
}: {
  open: boolean;
  materialId: number;
  label: string;
  markUnsuitable: boolean;
  printedName: string;
  needsUsername: boolean;
  onClose: () => void;
}) {
  const fid = useId();
  const [test, setTest] = useState('');
  const decide = useDecideIrSuitability();
  return (
    <ReasonSignatureDialog
      open={open}
      title={markUnsuitable ? `Mark ${label}: identity by IR not suitable` : `Allow identity by IR for ${label} again`}
      meaningText={
        markUnsuitable
          ? `decide that infrared cannot confirm the identity of ${label}: no IR method is approved for it, no lot of it is tested by IR and no IR identity certificate is issued for it`
          : `decide that identity by IR suits ${label} again`
      }
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel={markUnsuitable ? 'Mark not suitable' : 'Allow identity by IR'}
      busy={decide.isPending}
      error={decide.error}
      onCancel={() => {
        decide.reset();
        onClose();
      }}
      reason={{ label: 'Reason', hint: 'Why (at least 3 characters).', minLength: 3, tooShort: 'Give a reason.' }}
      onSign={(signature, reason) =>
        decide.mutate(
          {
            id: materialId,
            suitable: !markUnsuitable,
            replacementTest: markUnsuitable ? test.trim() : undefined,
            reason,
            signature,
          },
          { onSuccess: onClose },
        )
      }
    >
      {markUnsuitable && (
        <Field
          id={`${fid}-t`}
          label="Test that replaces identity by IR"
          hint="For example the pharmacopoeial chemical tests."
        >
          <Textarea id={`${fid}-t`} value={test} onChange={(e) => setTest(e.target.value)} />
        </Field>
      )}
    </ReasonSignatureDialog>
  );
}
