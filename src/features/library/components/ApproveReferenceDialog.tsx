/**
 * Approval of a draft reference: the specificity gate is shown first; when another material
 * would pass, approval needs a written justification (at least 20 characters) that is signed
 * with it. The password is asked again (e-signature).
 */
import { ApiError } from '../../../lib/api';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { useApproveReference, useSpecificityGate, type GateReport } from '../api';
import { GateTable } from './GateTable';

export function ApproveReferenceDialog({
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
  const gate = useSpecificityGate(referenceId, open);
  const approve = useApproveReference();

  // A refusal by the gate at signing time carries the table as well.
  const refusedGate =
    approve.error instanceof ApiError && approve.error.code === 'SPECIFICITY_GATE'
      ? (approve.error.details as GateReport)
      : null;
  const report = refusedGate ?? gate.data ?? null;
  const blocked = report ? !report.passed : false;

  return (
    <ReasonSignatureDialog
      open={open}
      title={`Approve reference ${code}`}
      meaningText={
        blocked
          ? `approve reference ${code} although another material would pass this grade's test, for the reason written above`
          : `reviewed reference ${code}, its characteristic bands and the specificity check, and approve it for identity testing`
      }
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel={blocked ? 'Approve with justification' : 'Approve reference'}
      busy={approve.isPending}
      error={approve.error}
      onCancel={() => {
        approve.reset();
        onClose();
      }}
      reason={
        blocked
          ? {
              label: 'Justification',
              hint: 'Why approval is right although the method does not tell these materials apart (at least 20 characters). It is signed and kept in the audit trail.',
              minLength: 20,
              tooShort:
                'Another material would pass this test. Write a justification of at least 20 characters, or tighten the identity method first.',
            }
          : undefined
      }
      onSign={(signature, justification) =>
        approve.mutate(
          { id: referenceId, signature, justification: blocked ? justification : undefined },
          { onSuccess: onClose },
        )
      }
    >
      <section aria-label="Specificity check" className="flex max-h-72 flex-col gap-2 overflow-auto">
        <h3 className="text-sm font-semibold">Specificity check</h3>
        {gate.isPending && !report ? (
          <p className="text-sm text-muted">Scoring against the approved references of other materials…</p>
        ) : null}
        {gate.isError && !report ? <p className="text-sm text-fail">{(gate.error as Error).message}</p> : null}
        {report && <GateTable gate={report} onlyOffending={blocked} />}
      </section>
    </ReasonSignatureDialog>
  );
}
