/** Tests awaiting verification that the signed-in verifier may verify (never their own). */
import type { ColumnDef } from '@tanstack/react-table';
import { useNavigate } from 'react-router-dom';
import { PageLoading } from '../app/lazy-page';
import { DataTable } from '../components/DataTable';
import { DateTime } from '../components/DateTime';
import { QueryState } from '../components/QueryState';
import { PageHeader } from '../components/PageHeader';
import { Verdict } from '../components/Verdict';
import { useVerificationQueue, type QueueTest } from '../features/testing/api';

const columns: ColumnDef<QueueTest, unknown>[] = [
  {
    header: 'Lot',
    accessorKey: 'lotNumber',
    cell: (c) => <span className="font-medium tabular-nums">{c.getValue() as string}</span>,
  },
  { header: 'Material', accessorKey: 'material' },
  { header: 'Attempt', accessorFn: (t) => `${t.attempt}${t.isRetest ? ' (retest)' : ''}` },
  { header: 'Containers', accessorKey: 'containers', meta: { align: 'right' } },
  {
    header: 'Results',
    meta: { key: true },
    accessorKey: 'failing',
    cell: (c) =>
      (c.getValue() as number) > 0 ? (
        <Verdict verdict="fail" label={`${c.getValue()} failing`} size="sm" />
      ) : (
        <Verdict verdict="pass" label="All pass" size="sm" />
      ),
  },
  { header: 'Performed by', accessorKey: 'performedBy' },
  {
    header: 'Signed',
    meta: { key: true },
    accessorKey: 'signedPerformedAt',
    cell: (c) => <DateTime value={c.getValue() as string} />,
    enableColumnFilter: false,
  },
];

export default function VerificationPage() {
  const q = useVerificationQueue();
  const navigate = useNavigate();
  return (
    <div className="max-w-7xl">
      <PageHeader
        title="Tests to verify"
        subtitle="Identity tests signed performed by someone else. Tests you performed or measured are not listed: a second person verifies them."
      />
      <QueryState query={q} loading={<PageLoading />}>
        {(data) => (
          <DataTable
            data={data}
            columns={columns}
            label="Tests awaiting verification"
            onRowClick={(t) => navigate(`/tests/${t.testId}/review`)}
            getRowId={(t) => String(t.testId)}
            emptyMessage="No tests await your verification."
          />
        )}
      </QueryState>
    </div>
  );
}
