/**
 * A role change that waits for a second administrator (two-person rule, docs/access.md): who asked
 * for which roles and why; another administrator confirms it with an e-signature or declines it
 * with a reason, and the requester may withdraw it.
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { Dialog } from '../../../components/Dialog';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { roleList } from '../../../lib/roles';
import { useConfirmRoleChange, useDeclineRoleChange, type PendingRoleChange, type UserAccount } from '../api';
import { ReasonForm } from './ReasonForm';

export function PendingRoleChangeBox({
  user,
  change,
  me,
  onNotice,
}: {
  user: UserAccount;
  change: PendingRoleChange;
  me: { id: number; fullName: string; signedOnce: boolean };
  onNotice: (text: string) => void;
}) {
  const confirm = useConfirmRoleChange();
  const decline = useDeclineRoleChange();
  const [action, setAction] = useState<'confirm' | 'decline' | null>(null);
  const mine = change.requestedBy === me.id;
  const close = () => {
    setAction(null);
    confirm.reset();
    decline.reset();
  };
  return (
    <div
      role="region"
      aria-label="Role change awaiting confirmation"
      className="mt-3 rounded-md border border-amber/50 bg-amber-soft px-3 py-2 text-sm"
      data-testid="pending-role-change"
    >
      <p className="font-medium">Role change awaiting a second administrator</p>
      <p>
        {roleList(change.rolesBefore) || 'no role'} → <strong>{roleList(change.rolesAfter)}</strong>
      </p>
      <p className="text-muted">
        Asked by {change.requestedByName} on <DateTime value={change.requestedAt} />: {change.reason}
      </p>
      <div className="mt-2 flex flex-wrap gap-2">
        {!mine && (
          <Button variant="primary" onClick={() => setAction('confirm')}>
            Confirm role change
          </Button>
        )}
        <Button onClick={() => setAction('decline')}>{mine ? 'Withdraw request' : 'Decline'}</Button>
      </div>
      {mine && <p className="mt-1 text-xs text-muted">You asked for it, so another administrator confirms it.</p>}
      <SignatureDialog
        open={action === 'confirm'}
        title={`Confirm the role change of ${user.username}`}
        meaningText={`confirm, as the second administrator, that ${user.fullName} holds the roles ${roleList(change.rolesAfter)}`}
        record={`${user.fullName} (${user.username}): ${roleList(change.rolesBefore) || 'no role'} → ${roleList(change.rolesAfter)}`}
        printedName={me.fullName}
        needsUsername={!me.signedOnce}
        confirmLabel="Confirm role change"
        busy={confirm.isPending}
        error={confirm.error}
        onCancel={close}
        onSign={(signature) =>
          confirm.mutate(
            { requestId: change.requestId, signature },
            {
              onSuccess: () => {
                close();
                onNotice(`The roles of ${user.username} are now ${roleList(change.rolesAfter)}.`);
              },
            },
          )
        }
      />
      <Dialog
        open={action === 'decline'}
        title={mine ? 'Withdraw the role change' : `Decline the role change of ${user.username}`}
        onClose={close}
        busy={decline.isPending}
      >
        <ReasonForm
          confirmLabel={mine ? 'Withdraw request' : 'Decline role change'}
          busy={decline.isPending}
          error={decline.error}
          onCancel={close}
          onConfirm={(reason) =>
            decline.mutate(
              { requestId: change.requestId, reason },
              {
                onSuccess: () => {
                  close();
                  onNotice(`The role change of ${user.username} was ${mine ? 'withdrawn' : 'declined'}.`);
                },
              },
            )
          }
        />
      </Dialog>
    </div>
  );
}
