/** One account's facts and the actions on it; every action asks the reason. */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { Dialog } from '../../../components/Dialog';
import { roleList } from '../../../lib/roles';
import { useUnlockUser, useUpdateUser, type UserAccount } from '../api';
import { EditUserForm } from './EditUserForm';
import { PendingRoleChangeBox } from './PendingRoleChange';
import { ReasonForm } from './ReasonForm';
import { ResetPasswordForm } from './ResetPasswordForm';
import { UserStatus } from './UserStatus';

type Action = 'edit' | 'reset' | 'unlock' | 'deactivate' | 'reactivate' | null;

export function UserPanel({
  user,
  me,
  onNotice,
}: {
  user: UserAccount;
  me: { id: number; fullName: string; signedOnce: boolean };
  onNotice: (text: string) => void;
}) {
  const isSelf = user.id === me.id;
  const [action, setAction] = useState<Action>(null);
  const update = useUpdateUser();
  const unlock = useUnlockUser();
  const close = () => {
    setAction(null);
    update.reset();
    unlock.reset();
  };

  return (
    <section aria-labelledby="user-panel-title" className="rounded-md border border-line bg-white p-4">
      <div className="flex items-start justify-between gap-2">
        <div>
          <h2 id="user-panel-title" className="text-lg">
            {user.fullName}
          </h2>
          <p className="text-sm text-muted">{user.username}</p>
        </div>
        <UserStatus user={user} />
      </div>
      <dl className="mt-3 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1 text-sm sm:grid-cols-[auto_1fr_auto_1fr] 2xl:grid-cols-[auto_1fr]">
        <dt className="text-muted">E-mail</dt>
        <dd className="break-all">{user.email}</dd>
        <dt className="text-muted">Roles</dt>
        <dd>{roleList(user.roles)}</dd>
        <dt className="text-muted">Failed sign-ins</dt>
        <dd className="tabular-nums">{user.failedAttempts}</dd>
        {user.lockedUntil && (
          <>
            <dt className="text-muted">Locked until</dt>
            <dd>
              <DateTime value={user.lockedUntil} />
            </dd>
          </>
        )}
        <dt className="text-muted">Created</dt>
        <dd>
          <DateTime value={user.createdAt} />
        </dd>
      </dl>
      {user.pendingRoleChange && (
        <PendingRoleChangeBox user={user} change={user.pendingRoleChange} me={me} onNotice={onNotice} />
      )}
      <div className="mt-4 flex flex-wrap gap-2">
        <Button onClick={() => setAction('edit')}>{isSelf ? 'Edit name, e-mail' : 'Edit name, e-mail, roles'}</Button>
        <Button onClick={() => setAction('reset')}>Reset password</Button>
        {user.lockedUntil && <Button onClick={() => setAction('unlock')}>Unlock</Button>}
        {user.active ? (
          <Button
            variant="danger"
            onClick={() => setAction('deactivate')}
            disabled={isSelf}
            title={isSelf ? 'Nobody changes the status of their own account.' : undefined}
          >
            Deactivate
          </Button>
        ) : (
          <Button onClick={() => setAction('reactivate')}>Reactivate</Button>
        )}
      </div>
      {isSelf && (
        <p className="mt-2 text-xs text-muted">
          This is your own account: another administrator changes its roles and status, never you.
        </p>
      )}

      <Dialog
        open={action === 'edit'}
        title={`Edit ${user.username}`}
        description="Changing roles ends the person's open sessions."
        onClose={close}
        busy={update.isPending}
      >
        <EditUserForm
          user={user}
          isSelf={isSelf}
          onCancel={close}
          onDone={(after) => {
            close();
            onNotice(
              after.pendingRoleChange
                ? `The account ${user.username} was changed. The roles ${roleList(after.pendingRoleChange.rolesAfter)} await a second administrator's confirmation.`
                : `The account ${user.username} was changed.`,
            );
          }}
        />
      </Dialog>
      <Dialog open={action === 'reset'} title={`Reset the password of ${user.username}`} onClose={close}>
        <ResetPasswordForm
          user={user}
          onCancel={close}
          onDone={(pw) => {
            close();
            onNotice(
              `The password of ${user.username} was reset. Temporary password: ${pw} — hand it over in person; it is not shown again.`,
            );
          }}
        />
      </Dialog>
      <Dialog
        open={action === 'unlock'}
        title={`Unlock ${user.username}`}
        description="The count of failed sign-ins starts again from zero."
        onClose={close}
        busy={unlock.isPending}
      >
        <ReasonForm
          confirmLabel="Unlock account"
          busy={unlock.isPending}
          error={unlock.error}
          onCancel={close}
          onConfirm={(reason) =>
            unlock.mutate(
              { id: user.id, reason },
              {
                onSuccess: () => {
                  close();
                  onNotice(`The account ${user.username} was unlocked.`);
                },
              },
            )
          }
        />
      </Dialog>
      <Dialog
        open={action === 'deactivate' || action === 'reactivate'}
        title={action === 'deactivate' ? `Deactivate ${user.username}` : `Reactivate ${user.username}`}
        description={
          action === 'deactivate'
            ? 'The person can no longer sign in and their open sessions end. The account and everything it signed are kept.'
            : 'The person can sign in again with their current password.'
        }
        onClose={close}
        busy={update.isPending}
      >
        <ReasonForm
          confirmLabel={action === 'deactivate' ? 'Deactivate account' : 'Reactivate account'}
          variant={action === 'deactivate' ? 'danger' : 'primary'}
          busy={update.isPending}
          error={update.error}
          onCancel={close}
          onConfirm={(reason) =>
            update.mutate(
              { id: user.id, active: action !== 'deactivate', reason },
              {
                onSuccess: () => {
                  const what = action === 'deactivate' ? 'deactivated' : 'reactivated';
                  close();
                  onNotice(`The account ${user.username} was ${what}.`);
                },
              },
            )
          }
        />
      </Dialog>
    </section>
  );
}
