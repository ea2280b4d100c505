/** Lots, newest first, sortable and filterable. */
import type { ColumnDef } from '@tanstack/react-table';
import { DataTable } from '../../../components/DataTable';
import { DateTime } from '../../../components/DateTime';
import type { LotSummary } from '../api';
import { IdentityStatusBadge, LotStatusText } from './IdentityStatus';

const columns: ColumnDef<LotSummary, unknown>[] = [
  {
    header: 'Lot',
    accessorKey: 'lotNumber',
    cell: (c) => <span className="font-medium tabular-nums">{c.getValue() as string}</span>,
  },
  { header: 'Material', accessorFn: (l) => `${l.material.name} (${l.material.code})` },
  { header: 'Supplier lot', accessorFn: (l) => `${l.supplier} · ${l.supplierLot}` },
  { header: 'Containers', accessorKey: 'containerCount', meta: { align: 'right' } },
  { header: 'Received', accessorKey: 'receivedDate', meta: { nowrap: true } },
  {
    header: 'Storage',
    meta: { key: true },
    accessorKey: 'status',
    cell: (c) => <LotStatusText status={c.getValue() as string} />,
  },
  {
    header: 'Identity',
    meta: { key: true, wrap: true },
    accessorKey: 'identityStatus',
    cell: (c) => <IdentityStatusBadge status={c.getValue() as string} />,
  },
  {
    header: 'Registered',
    meta: { key: true },
    accessorKey: 'createdAt',
    cell: (c) => <DateTime value={c.getValue() as string} />,
    enableColumnFilter: false,
  },
];

export function LotsTable({ lots, onOpen }: { lots: LotSummary[]; onOpen: (l: LotSummary) => void }) {
  return (
    <DataTable
      data={lots}
      columns={columns}
      label="Lots"
      globalFilter="Search lot, material, supplier lot"
      onRowClick={onOpen}
      getRowId={(l) => String(l.id)}
      emptyMessage="No lots registered yet."
    />
  );
}
