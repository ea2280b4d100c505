/** Lots: register a received lot (operator) and the list of lots. */
import { useState } from 'react';
import { useNavigate } from 'react-router-dom';
import { PageLoading } from '../app/lazy-page';
import { useHasRole } from '../app/session';
import { Button } from '../components/Button';
import { QueryState } from '../components/QueryState';
import { PageHeader } from '../components/PageHeader';
import { useLots } from '../features/testing/api';
import { LotReceiptForm } from '../features/testing/components/LotReceiptForm';
import { LotsTable } from '../features/testing/components/LotsTable';

export default function LotsPage() {
  const isOperator = useHasRole('operator');
  const [creating, setCreating] = useState(false);
  const list = useLots();
  const navigate = useNavigate();
  return (
    <div className="max-w-7xl">
      <PageHeader
        title="Lots"
        subtitle="Received lots stay in quarantine until the identity of every container is confirmed and verified."
        actions={
          isOperator &&
          !creating && (
            <Button size="bench" variant="primary" onClick={() => setCreating(true)}>
              Register a received lot
            </Button>
          )
        }
      />
      {creating && (
        <section aria-labelledby="new-lot" className="mb-6 rounded-md border border-line bg-white p-4">
          <h2 id="new-lot" className="mb-3 text-lg">
            Register a received lot
          </h2>
          <LotReceiptForm onCancel={() => setCreating(false)} onDone={(lot) => navigate(`/lots/${lot.id}`)} />
        </section>
      )}
      <QueryState query={list} loading={<PageLoading />}>
        {(data) => <LotsTable lots={data} onOpen={(l) => navigate(`/lots/${l.id}`)} />}
      </QueryState>
    </div>
  );
}
