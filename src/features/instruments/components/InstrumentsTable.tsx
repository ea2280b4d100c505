/** Instruments with their check status, sortable and searchable. */
import { createColumnHelper } from '@tanstack/react-table';
import { DataTable } from '../../../components/DataTable';
import { DateTime } from '../../../components/DateTime';
import { Verdict } from '../../../components/Verdict';
import { SAMPLING_LABELS } from '../../../../server/modules/instruments/contract';
import type { InstrumentListItem } from '../api';
import { CheckStatus } from './CheckStatus';
import { specKindText } from './spec-kind';

const col = createColumnHelper<InstrumentListItem>();
const columns = [
  col.accessor('name', {
    header: 'Instrument',
    // Looks like the link it is: the row opens the instrument.
    cell: (c) => <span className="font-medium text-petrol underline underline-offset-2">{c.getValue()}</span>,
  }),
  col.accessor('serialNumber', { header: 'Serial number' }),
  col.accessor(
    (i) =>
      `${i.technique === 'nir' ? 'NIR' : 'Mid-IR'}, ${SAMPLING_LABELS[i.sampling as keyof typeof SAMPLING_LABELS] ?? i.sampling}`,
    { id: 'kind', header: 'Technique' },
  ),
  col.accessor('location', { header: 'Location' }),
  col.accessor((i) => (!i.active ? 'out of use' : i.checkDue ? 'check due' : 'check valid'), {
    id: 'status',
    header: 'Instrument check',
    meta: { key: true, wrap: true },
    cell: (c) => <CheckStatus instrument={c.row.original} />,
  }),
  col.accessor((i) => i.lastCheck?.performedAt ?? '', {
    id: 'last',
    header: 'Last check',
    meta: { key: true },
    cell: (c) => {
      const l = c.row.original.lastCheck;
      if (!l) return <span className="text-muted">none yet</span>;
      return (
        <span className="flex flex-wrap items-center gap-2">
          <Verdict verdict={l.verdict} size="sm" />
          <DateTime value={l.performedAt} />
          <span className="text-muted">{l.performedByName}</span>
        </span>
      );
    },
  }),
  col.accessor(
    (i) => (i.currentSpec ? `v${i.currentSpec.version} ${specKindText(i.currentSpec.kind)}` : 'none approved'),
    { id: 'spec', header: 'Check specification', meta: { key: true, wrap: true } },
  ),
];

export function InstrumentsTable({
  instruments,
  onOpen,
}: {
  instruments: InstrumentListItem[];
  onOpen: (i: InstrumentListItem) => void;
}) {
  return (
    <DataTable
      data={instruments}
      columns={columns}
      label="Instruments"
      globalFilter="Search instruments"
      initialSort={[{ id: 'name', desc: false }]}
      onRowClick={onOpen}
      getRowId={(i) => String(i.id)}
      rowClassName={(i) => (i.active ? '' : 'text-muted')}
      emptyMessage="No instruments registered yet. A QA manager registers them."
    />
  );
}
