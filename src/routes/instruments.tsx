/** Instruments: registry with the check status of each ("check due" in words and icon). */
import { useNavigate } from 'react-router-dom';
import { useHasRole } from '../app/session';
import { PageLoading } from '../app/lazy-page';
import { useCreatePanel } from '../components/CreatePanel';
import { QueryState } from '../components/QueryState';
import { PageHeader } from '../components/PageHeader';
import { useInstruments } from '../features/instruments/api';
import { InstrumentsTable } from '../features/instruments/components/InstrumentsTable';
import { RegisterInstrumentForm } from '../features/instruments/components/RegisterInstrumentForm';

export default function InstrumentsPage() {
  const list = useInstruments();
  const isQa = useHasRole('qa_manager');
  const create = useCreatePanel({ label: 'Register instrument', title: 'New instrument', allowed: isQa });
  const navigate = useNavigate();
  return (
    <div className="max-w-7xl">
      <PageHeader
        title="Instruments"
        subtitle="An instrument is used for identity testing only while in service and with every required instrument check passed and unexpired."
        actions={create.button}
      />
      {create.panel((close) => (
        <RegisterInstrumentForm onCancel={close} onDone={(id) => navigate(`/instruments/${id}`)} />
      ))}
      <QueryState query={list} loading={<PageLoading />}>
        {(data) => <InstrumentsTable instruments={data} onOpen={(i) => navigate(`/instruments/${i.id}`)} />}
      </QueryState>
    </div>
  );
}
