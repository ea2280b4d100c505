/** One instrument: check status, record a check (operator), check history, check specifications (QA approves new ones). */
import { useState } from 'react';
import { Link, useParams } from 'react-router-dom';
import { useHasRole, useSession } from '../app/session';
import { PageLoading } from '../app/lazy-page';
import { Button } from '../components/Button';
import { DateTime } from '../components/DateTime';
import { ErrorNote } from '../components/ErrorNote';
import { RecordAlerts } from '../components/RecordAlerts';
import { PageHeader } from '../components/PageHeader';
import { RecordHistory } from '../features/audit/components/RecordHistory';
import { Verdict } from '../components/Verdict';
import { formatWavenumber } from '../lib/format';
import {
  CHECK_TYPE_LABELS,
  isPolystyreneResult,
  useInstrument,
  type InstrumentCheck,
} from '../features/instruments/api';
import { ApproveLimitsDialog } from '../features/instruments/components/ApproveLimitsDialog';
import { ApproveSpecDialog } from '../features/instruments/components/ApproveSpecDialog';
import { CheckHistory } from '../features/instruments/components/CheckHistory';
import { CheckStatus } from '../features/instruments/components/CheckStatus';
import { RecordCheckDialog } from '../features/instruments/components/RecordCheckDialog';
import { ImpactAssessments } from '../features/instruments/components/ImpactAssessments';
import { IntakePanel } from '../features/instruments/components/IntakePanel';
import { LifecycleRecords, ServiceBanner } from '../features/instruments/components/LifecyclePanel';
import { specKindText } from '../features/instruments/components/spec-kind';
import { SAMPLING_LABELS } from '../../server/modules/instruments/contract';

export default function InstrumentPage() {
  const canSeeTrail = useHasRole('auditor', 'qa_manager', 'admin');
  const id = Number(useParams().id);
  const { user } = useSession();
  const isQa = useHasRole('qa_manager');
  const isAdmin = useHasRole('admin');
  const canCheck = useHasRole('operator');
  const canBench = useHasRole('operator', 'verifier', 'qa_manager');
  const q = useInstrument(id);
  const [checking, setChecking] = useState(false);
  const [specing, setSpecing] = useState(false);
  const [limiting, setLimiting] = useState(false);
  const [last, setLast] = useState<InstrumentCheck | null>(null);

  if (q.isPending) return <PageLoading />;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const i = q.data;
  const current = i.specs.find((s) => s.status === 'approved');
  const checkTypes = [...new Set(i.specs.filter((s) => s.status === 'approved').map((s) => s.checkType))];
  return (
    <div className="max-w-7xl">
      <PageHeader
        eyebrow={
          <Link to="/instruments" className="text-petrol underline underline-offset-2">
            Instruments
          </Link>
        }
        title={i.name}
        subtitle={`${i.technique === 'nir' ? 'NIR' : 'Mid-IR'}, ${SAMPLING_LABELS[i.sampling as keyof typeof SAMPLING_LABELS] ?? i.sampling} · serial ${i.serialNumber}${i.location ? ` · ${i.location}` : ''} · a check is valid for ${i.checkValidityHours} h`}
        actions={
          <>
            <RecordHistory
              entityType="instrument"
              entityId={i.id}
              label={`instrument ${i.name}`}
              showTrailLink={canSeeTrail}
            />
            {isQa && <Button onClick={() => setSpecing(true)}>New check specification</Button>}
            {isQa && <Button onClick={() => setLimiting(true)}>New check limits</Button>}
            {canCheck && (
              <Button variant="primary" size="bench" onClick={() => setChecking(true)} disabled={!i.active || !current}>
                Record instrument check
              </Button>
            )}
          </>
        }
      />
      <RecordAlerts type="instrument" id={i.id} label={`Instrument ${i.name}`} />
      <ServiceBanner instrument={i} canBench={canBench} isQa={isQa} me={user} />
      <div className="mb-6 flex flex-wrap items-center gap-3">
        <CheckStatus instrument={i} size="lg" />
        {!current && (
          <span className="text-sm text-fail">
            No approved check specification: QA must approve one before the first check.
          </span>
        )}
      </div>
      {last && (
        <p
          role="status"
          className="mb-4 flex flex-wrap items-center gap-2 rounded-md border border-line bg-white px-3 py-2 text-sm"
          data-testid="check-outcome"
        >
          Check recorded: <Verdict verdict={last.verdict} />{' '}
          {last.verdict === 'pass' ? (
            <>
              valid until <DateTime value={last.validUntil} />
            </>
          ) : (
            `${isPolystyreneResult(last.result) ? `${last.result.bands.filter((b) => !b.ok).length} of ${last.result.bands.length} bands outside their tolerance; ` : ''}the instrument may not be used for testing, and an impact assessment of the measurements since the last passing check is open.`
          )}
        </p>
      )}
      <ImpactAssessments instrumentId={i.id} isQa={isQa} me={user} />
      <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_22rem]">
        <section aria-labelledby="hist-h" className="min-w-0">
          <h2 id="hist-h" className="mb-2 text-lg">
            Check history
          </h2>
          <CheckHistory instrument={i} />
        </section>
        <section aria-labelledby="spec-h">
          <h2 id="spec-h" className="mb-2 text-lg">
            Check specifications
          </h2>
          <ol className="flex flex-col gap-2">
            {i.specs.map((s) => (
              <li
                key={s.id}
                className={`rounded-md border bg-white p-3 text-sm ${s.status === 'approved' ? 'border-petrol/50' : 'border-line text-muted'}`}
              >
                <p className="font-medium">
                  Version {s.version}: {CHECK_TYPE_LABELS[s.checkType]}, {specKindText(s.kind)} ·{' '}
                  {s.status === 'approved' ? 'in force' : s.status}
                </p>
                {s.checkType === 'polystyrene' ? (
                  <p className="mt-1 tabular-nums">
                    {s.bands.map((b) => `${formatWavenumber(b.nominal, 2)} ±${b.tolerance}`).join(', ')}
                  </p>
                ) : (
                  <p className="mt-1 font-mono text-xs break-all">{JSON.stringify(s.limits)}</p>
                )}
                {s.justification && <p className="mt-1">“{s.justification}”</p>}
                <p className="mt-1 text-xs text-muted">
                  {s.signature ? (
                    <>
                      Approved by {s.signature.printedName}, <DateTime value={s.signature.signedAt} seconds />
                    </>
                  ) : (
                    <>
                      Adopted from the pharmacopoeia when {s.createdByName ?? 'QA'} registered the instrument,{' '}
                      <DateTime value={s.createdAt} />
                    </>
                  )}
                </p>
              </li>
            ))}
            {i.specs.length === 0 && <li className="text-sm text-muted">None yet.</li>}
          </ol>
        </section>
      </div>
      <IntakePanel instrumentId={i.id} canSet={isQa || isAdmin} canDecide={canCheck} />
      <LifecycleRecords instrument={i} canBench={canBench} isQa={isQa} me={user} />
      {canCheck && (
        <RecordCheckDialog
          open={checking}
          instrumentId={i.id}
          instrumentName={i.name}
          checkTypes={checkTypes}
          printedName={user.fullName}
          needsUsername={!user.signedOnce}
          onClose={() => setChecking(false)}
          onRecorded={(c) => {
            setLast(c);
            setChecking(false);
          }}
        />
      )}
      {isQa && (
        <ApproveLimitsDialog
          open={limiting}
          instrument={i}
          printedName={user.fullName}
          needsUsername={!user.signedOnce}
          onClose={() => setLimiting(false)}
        />
      )}
      {isQa && (
        <ApproveSpecDialog
          open={specing}
          instrument={i}
          printedName={user.fullName}
          needsUsername={!user.signedOnce}
          onClose={() => setSpecing(false)}
        />
      )}
    </div>
  );
}
