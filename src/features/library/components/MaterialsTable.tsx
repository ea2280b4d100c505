/** Materials (grades) of the library: sortable and searchable. */
import { createColumnHelper } from '@tanstack/react-table';
import { DataTable } from '../../../components/DataTable';
import { TECHNIQUE_LABELS } from '../../../../server/modules/library/contract';
import type { MaterialListItem } from '../api';

const col = createColumnHelper<MaterialListItem>();

const columns = [
  col.accessor('code', { header: 'Code', cell: (c) => <span className="font-medium">{c.getValue()}</span> }),
  col.accessor('name', { header: 'Name' }),
  col.accessor('grade', { header: 'Grade' }),
  col.accessor('monographRef', { header: 'Monograph' }),
  col.accessor((m) => m.techniques.map((t) => TECHNIQUE_LABELS[t as keyof typeof TECHNIQUE_LABELS] ?? t).join(', '), {
    id: 'techniques',
    header: 'Technique',
  }),
  col.accessor(
    (m) => (m.approvedMethod ? `v${m.approvedMethod.version} approved` : m.draftMethodId ? 'draft only' : 'none'),
    {
      id: 'method',
      header: 'Identity method',
      meta: { key: true },
      cell: (c) => <span className={c.row.original.approvedMethod ? '' : 'text-amber'}>{c.getValue()}</span>,
    },
  ),
  col.accessor((m) => m.references.approved, {
    id: 'approved',
    header: 'Approved references',
    meta: { align: 'right', key: true },
  }),
  col.accessor((m) => m.references.draft, {
    id: 'drafts',
    header: 'Drafts',
    meta: { align: 'right', key: true, wrap: true },
    cell: (c) =>
      c.getValue() > 0 ? <span className="font-medium text-amber">{c.getValue()} awaiting approval</span> : '0',
  }),
  col.accessor((m) => (m.active ? 'Active' : 'Inactive'), { id: 'active', header: 'Status', meta: { key: true } }),
];

export function MaterialsTable({
  materials,
  onOpen,
}: {
  materials: MaterialListItem[];
  onOpen: (m: MaterialListItem) => void;
}) {
  return (
    <DataTable
      data={materials}
      columns={columns}
      label="Materials"
      globalFilter="Search code, name, grade, monograph"
      initialSort={[{ id: 'code', desc: false }]}
      onRowClick={onOpen}
      getRowId={(m) => String(m.id)}
      rowClassName={(m) => (m.active ? '' : 'text-muted')}
      emptyMessage="No materials yet. A QA manager creates the first one."
    />
  );
}
