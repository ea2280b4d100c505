/** Investigations of failing identity results: open ones first, or all. */
import type { ColumnDef } from '@tanstack/react-table';
import { useState } from 'react';
import { useNavigate } from 'react-router-dom';
import { PageLoading } from '../app/lazy-page';
import { Button } from '../components/Button';
import { DataTable } from '../components/DataTable';
import { DateTime } from '../components/DateTime';
import { QueryState } from '../components/QueryState';
import { PageHeader } from '../components/PageHeader';
import { useInvestigations, type Investigation } from '../features/investigations/api';
import { InvestigationStatus } from '../features/investigations/components/InvestigationStatus';

const columns: ColumnDef<Investigation, unknown>[] = [
  {
    header: 'Investigation',
    accessorKey: 'number',
    cell: (c) => <span className="font-medium tabular-nums">{c.getValue() as string}</span>,
  },
  { header: 'Lot', accessorFn: (i) => (i.kind === 'trend' ? 'trend signal' : (i.lotNumber ?? '')) },
  { header: 'Material', accessorKey: 'materialName' },
  {
    header: 'Failing containers',
    meta: { key: true },
    accessorFn: (i) =>
      i.kind === 'trend'
        ? `${i.trend?.measurements.length ?? 0} measurements of signal ${i.trend?.signal.id ?? ''}`
        : i.failing.map((f) => f.label).join(', '),
  },
  {
    header: 'Status',
    meta: { key: true },
    accessorKey: 'status',
    cell: (c) => <InvestigationStatus inv={c.row.original} />,
  },
  {
    header: 'Opened',
    accessorKey: 'openedAt',
    cell: (c) => <DateTime value={c.getValue() as string} />,
    enableColumnFilter: false,
  },
];

export default function InvestigationsPage() {
  const [state, setState] = useState<'open' | 'all'>('open');
  const q = useInvestigations(state);
  const navigate = useNavigate();
  return (
    <div className="max-w-7xl">
      <PageHeader
        title="Investigations"
        subtitle="A verified test with a failing container opens an investigation; QA opens one from a trend signal. QA records the phase I laboratory check and decides."
        actions={
          <Button onClick={() => setState(state === 'open' ? 'all' : 'open')}>
            {state === 'open' ? 'Show closed ones too' : 'Show open ones only'}
          </Button>
        }
      />
      <QueryState query={q} loading={<PageLoading />}>
        {(data) => (
          <DataTable
            data={data}
            columns={columns}
            label="Investigations"
            onRowClick={(i) => navigate(`/investigations/${i.id}`)}
            getRowId={(i) => String(i.id)}
            emptyMessage={state === 'open' ? 'No open investigation.' : 'No investigation yet.'}
          />
        )}
      </QueryState>
    </div>
  );
}
