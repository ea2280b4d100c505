import { useState } from 'react';
import { useSearchParams } from 'react-router-dom';
import { useSession } from '../app/session';
import { useCreatePanel } from '../components/CreatePanel';
import { QueryState } from '../components/QueryState';
import { PageHeader } from '../components/PageHeader';
import { PageLoading } from '../app/lazy-page';
import { useUsers } from '../features/users/api';
import { CreateUserForm } from '../features/users/components/CreateUserForm';
import { UserPanel } from '../features/users/components/UserPanel';
import { UsersTable } from '../features/users/components/UsersTable';
import { RecordHistory } from '../features/audit/components/RecordHistory';
import { roleList } from '../lib/roles';

export default function AdminUsersPage() {
  const { user: me } = useSession();
  const users = useUsers();
  // ?account=ID (from the work queue) opens that account.
  const [params, setParams] = useSearchParams();
  const fromLink = Number(params.get('account'));
  const [selectedId, setSelectedIdState] = useState<number | undefined>(fromLink > 0 ? fromLink : undefined);
  const [notice, setNotice] = useState<string | null>(null);
  const setSelectedId = (id: number | undefined) => {
    setSelectedIdState(id);
    setParams(id ? { account: String(id) } : {}, { replace: true });
  };
  const create = useCreatePanel({ label: 'Create account', title: 'New account', onOpen: () => setNotice(null) });
  const selected = users.data?.find((u) => u.id === selectedId);

  return (
    <div className="max-w-7xl">
      <PageHeader
        title="User accounts"
        subtitle="Accounts are deactivated, never deleted. Every change is kept in the audit trail with its reason."
        actions={create.button}
      />
      {notice && (
        <p
          role="status"
          className="mb-4 rounded-md border border-pass/40 bg-pass-soft px-3 py-2 text-sm"
          data-testid="notice"
        >
          {notice}
        </p>
      )}
      {create.panel((close) => (
        <CreateUserForm
          onCancel={close}
          onCreated={(u, pw) => {
            close();
            setSelectedId(u.id);
            setNotice(
              `The account ${u.username} was created. Temporary password: ${pw} — hand it over in person; it is not shown again.` +
                (u.pendingRoleChange
                  ? ` The roles ${roleList(u.pendingRoleChange.rolesAfter)} await a second administrator's confirmation.`
                  : ''),
            );
          }}
        />
      ))}
      <QueryState query={users} loading={<PageLoading />}>
        {(data) => (
          <div className="grid gap-4 2xl:grid-cols-[minmax(0,1fr)_22rem] 2xl:gap-6">
            <UsersTable
              users={data}
              selectedId={selectedId}
              onSelect={(u) => {
                // Moving on to another account clears the notice (a new account's temporary password
                // is shown once, only until the administrator turns to something else).
                if (u.id !== selectedId) setNotice(null);
                setSelectedId(u.id);
              }}
            />
            {/* beside the table on wide screens, above it otherwise */}
            <div className="order-first 2xl:order-last">
              {selected ? (
                <>
                  <UserPanel key={selected.id} user={selected} me={me} onNotice={setNotice} />
                  <div className="mt-2">
                    <RecordHistory
                      key={selected.id}
                      entityType="user"
                      entityId={selected.id}
                      label={`the account ${selected.username}`}
                      buttonLabel="Account history"
                      showTrailLink
                    />
                  </div>
                </>
              ) : (
                <p className="rounded-md border border-dashed border-line px-4 py-3 text-sm text-muted">
                  Choose an account in the table to see its details and change it.
                </p>
              )}
            </div>
          </div>
        )}
      </QueryState>
    </div>
  );
}
