/** Reference spectra of a grade (or awaiting approval across grades). */
import { createColumnHelper } from '@tanstack/react-table';
import { DataTable } from '../../../components/DataTable';
import { DateTime } from '../../../components/DateTime';
import type { ReferenceListItem } from '../api';
import { StatusBadge } from './StatusBadge';

const col = createColumnHelper<ReferenceListItem>();

export function ReferencesTable({
  references,
  onOpen,
  showMaterial = false,
  label = 'Reference spectra',
}: {
  references: ReferenceListItem[];
  onOpen: (r: ReferenceListItem) => void;
  showMaterial?: boolean;
  label?: string;
}) {
  const columns = [
    col.accessor('code', { header: 'Reference', cell: (c) => <span className="font-medium">{c.getValue()}</span> }),
    ...(showMaterial
      ? [col.accessor((r) => `${r.materialCode ?? ''} ${r.materialName ?? ''}`, { id: 'material', header: 'Material' })]
      : []),
    col.accessor('status', {
      header: 'Status',
      meta: { key: true },
      cell: (c) => <StatusBadge status={c.getValue()} />,
    }),
    col.accessor('supplier', { header: 'Supplier' }),
    col.accessor('supplierLot', { header: 'Supplier lot' }),
    col.accessor('bandCount', { header: 'Bands', meta: { align: 'right' } }),
    col.accessor((r) => r.uploadedByName ?? '', { id: 'uploadedBy', header: 'Uploaded by' }),
    col.accessor('createdAt', { header: 'Uploaded', cell: (c) => <DateTime value={c.getValue()} /> }),
    col.accessor(
      (r) =>
        r.approvedBy
          ? `${r.approvedBy.printedName}${r.approvedBy.meaning === 'approved-with-justification' ? ' (with justification)' : ''}`
          : '',
      {
        id: 'approvedBy',
        header: 'Approved by',
        meta: { key: true },
      },
    ),
  ];
  return (
    <DataTable
      data={references}
      columns={columns}
      label={label}
      globalFilter="Search references"
      initialSort={[{ id: 'code', desc: false }]}
      onRowClick={onOpen}
      getRowId={(r) => String(r.id)}
      rowClassName={(r) => (r.status === 'retired' ? 'text-muted' : '')}
      emptyMessage="No reference spectra yet."
    />
  );
}
