/**
 * Approval of a draft reference: the specificity gate is shown first. When another material would
 * pass, comes within the margin of a limit, or could not be compared, one QA manager cannot approve
 * alone: an override needs a request signed by one QA manager and the approval of a second, who
 * confirms it here (docs/methods.md). The password is asked again (e-signature).
 */
import { ApiError } from '../../../lib/api';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { useApproveReference, useSpecificityGate, type GateOverride, type GateReport } from '../api';
import { GateTable } from './GateTable';
import type { ReferenceDialogProps } from './reference-dialog';

export function ApproveReferenceDialog({
  open,
  referenceId,
  code,
  printedName,
  needsUsername,
  pendingOverride,
  onClose,
}: ReferenceDialogProps & {
  /** An override another QA manager requested, which approving confirms. */
  pendingOverride: GateOverride | null;
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
  const confirming = blocked && pendingOverride !== null;

  return (
    <SignatureDialog
      open={open}
      title={`Approve reference ${code}`}
      meaningText={
        confirming
          ? `confirm the override requested by ${pendingOverride!.requestedByName} (${pendingOverride!.changeControl}) and approve reference ${code}`
          : `reviewed reference ${code}, its characteristic bands and the specificity check, and approve it for identity testing`
      }
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel={confirming ? 'Confirm override and approve' : 'Approve reference'}
      busy={approve.isPending}
      error={approve.error}
      onCancel={() => {
        approve.reset();
        onClose();
      }}
      onSign={(signature) =>
        approve.mutate(
          { id: referenceId, signature, overrideId: confirming ? pendingOverride!.id : undefined },
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
        {blocked && !confirming && (
          <p className="text-sm text-amber">
            The gate refuses this reference. One QA manager cannot approve alone: a QA manager requests an override
            (justification and change control), and a second one confirms it by approving.
          </p>
        )}
        {confirming && <p className="text-sm">Override justification: {pendingOverride!.justification}</p>}
        {report && <GateTable gate={report} onlyOffending={blocked} />}
      </section>
    </SignatureDialog>
  );
}
