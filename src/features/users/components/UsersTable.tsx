import { useMemo } from 'react';
import { createColumnHelper } from '@tanstack/react-table';
import { DataTable } from '../../../components/DataTable';
import { DateTime } from '../../../components/DateTime';
import { roleList } from '../../../lib/roles';
import type { UserAccount } from '../api';
import { UserStatus, userStatusText } from './UserStatus';

const col = createColumnHelper<UserAccount>();

export function UsersTable({
  users,
  selectedId,
  onSelect,
}: {
  users: UserAccount[];
  selectedId?: number;
  onSelect: (u: UserAccount) => void;
}) {
  const columns = useMemo(
    () => [
      col.accessor('username', {
        header: 'User name',
        cell: (c) => <span className="font-medium">{c.getValue()}</span>,
      }),
      col.accessor('fullName', { header: 'Full name' }),
      col.accessor('email', { header: 'E-mail' }),
      col.accessor(
        (u) =>
          roleList(u.roles) + (u.pendingRoleChange ? ` (to confirm: ${roleList(u.pendingRoleChange.rolesAfter)})` : ''),
        { id: 'roles', header: 'Roles', meta: { key: true } },
      ),
      col.accessor((u) => userStatusText(u), {
        id: 'status',
        header: 'Status',
        meta: { key: true },
        cell: (c) => <UserStatus user={c.row.original} />,
      }),
      col.accessor('createdAt', {
        header: 'Created',
        cell: (c) => <DateTime value={c.getValue()} />,
        enableColumnFilter: false,
        enableGlobalFilter: false,
      }),
    ],
    [],
  );
  return (
    <DataTable
      label="User accounts"
      data={users}
      columns={columns}
      globalFilter="Search name, e-mail, role, status"
      columnFilters
      initialSort={[{ id: 'username', desc: false }]}
      getRowId={(u) => String(u.id)}
      selectedRowId={selectedId !== undefined ? String(selectedId) : undefined}
      onRowClick={onSelect}
      rowClassName={(u) => (u.active ? '' : 'text-muted')}
      emptyMessage="No accounts yet."
    />
  );
}
