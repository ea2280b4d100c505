/** Instruments: registry with the check status of each ("check due" in words and icon). */
import { useState } from 'react';
import { useNavigate } from 'react-router-dom';
import { useHasRole } from '../app/session';
import { PageLoading } from '../app/lazy-page';
import { Button } from '../components/Button';
import { ErrorNote } from '../components/ErrorNote';
import { PageHeader } from '../components/PageHeader';
import { useInstruments } from '../features/instruments/api';
import { InstrumentsTable } from '../features/instruments/components/InstrumentsTable';
import { RegisterInstrumentForm } from '../features/instruments/components/RegisterInstrumentForm';

export default function InstrumentsPage() {
  const list = useInstruments();
  const isQa = useHasRole('qa_manager');
  const [creating, setCreating] = useState(false);
  const navigate = useNavigate();
  return (
    <div className="max-w-7xl">
      <PageHeader
        title="Instruments"
        subtitle="An instrument is used for identity testing only with a passing, unexpired polystyrene instrument check."
        actions={
          isQa &&
          !creating && (
            <Button variant="primary" onClick={() => setCreating(true)}>
              Register instrument
            </Button>
          )
        }
      />
      {creating && (
        <section aria-labelledby="new-inst" className="mb-6 rounded-md border border-line bg-white p-4">
          <h2 id="new-inst" className="mb-3 text-lg">
            New instrument
          </h2>
          <RegisterInstrumentForm onCancel={() => setCreating(false)} onDone={(id) => navigate(`/instruments/${id}`)} />
        </section>
      )}
      {list.isPending ? (
        <PageLoading />
      ) : list.isError ? (
        <ErrorNote error={list.error} onRetry={() => void list.refetch()} />
      ) : (
        <InstrumentsTable instruments={list.data} onOpen={(i) => navigate(`/instruments/${i.id}`)} />
      )}
    </div>
  );
}
