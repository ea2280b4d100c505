/**
 * One lot: facts, labels, the current test attempt (the operator's bench), verification state,
 * investigations, the certificate and the history of attempts with their signatures.
 */
import { Link, useParams } from 'react-router-dom';
import { PageLoading } from '../app/lazy-page';
import { useHasRole, useSession } from '../app/session';
import { buttonClass } from '../components/Button';
import { DateTime } from '../components/DateTime';
import { ErrorNote } from '../components/ErrorNote';
import { PageHeader } from '../components/PageHeader';
import { RecordHistory } from '../features/audit/components/RecordHistory';
import { Verdict } from '../components/Verdict';
import { LotImpactNotices } from '../features/instruments/components/ImpactAssessments';
import { labelsPdfUrl, useLot, useStartTest, type LotDetail } from '../features/testing/api';
import { IdentityStatusBadge, LotStatusText } from '../features/testing/components/IdentityStatus';
import { InstrumentPicker } from '../features/testing/components/InstrumentPicker';
import { SignatureList } from '../features/testing/components/Signatures';
import { TestBench } from '../features/testing/components/TestBench';
import { DispositionPanel } from '../features/disposition/components/DispositionPanel';
import { SamplingPanel } from '../features/disposition/components/SamplingPanel';
import { TestAcquisitions } from '../features/instruments/components/TestAcquisitions';

const TEST_STATUS: Record<string, string> = {
  'in-progress': 'In progress',
  'awaiting-verification': 'Awaiting verification',
  verified: 'Verified',
  returned: 'Returned to the operator',
};

function Certificate({ lot }: { lot: LotDetail }) {
  const c = lot.certificate;
  if (c.state === 'issued')
    return (
      <p className="text-sm">
        Identity certificate{' '}
        <Link className="font-medium text-petrol underline underline-offset-2" to={`/certificates/${c.id}`}>
          {c.number}
        </Link>{' '}
        issued <DateTime value={c.issuedAt} />.
      </p>
    );
  if (c.state === 'pending')
    return <p className="text-sm text-amber-ink">Identity passed; the identity certificate is pending.</p>;
  return null;
}

function StartAttempt({ lot }: { lot: LotDetail }) {
  const start = useStartTest(lot.id);
  const last = lot.tests.at(-1);
  const why =
    lot.identityStatus === 'retest-authorised'
      ? 'QA authorised a retest of named containers. Start the retest attempt.'
      : last?.status === 'returned'
        ? `Attempt ${last.attempt} was returned: ${last.returnedReason ?? ''} Start a new attempt and measure again.`
        : 'Choose the instrument to start testing. Only instruments with a valid instrument check can be used.';
  return (
    <section aria-labelledby="start" className="rounded-md border border-line bg-white p-4">
      <h2 id="start" className="mb-2 text-lg">
        Start test attempt {(last?.attempt ?? 0) + 1}
      </h2>
      <p className="mb-3 text-sm text-muted">{why}</p>
      <InstrumentPicker
        actionLabel="Start testing"
        busy={start.isPending}
        error={start.error}
        onPick={(id) => start.mutate(id)}
      />
    </section>
  );
}

export default function LotPage() {
  const id = Number(useParams().id);
  const { user } = useSession();
  const isOperator = useHasRole('operator');
  const isVerifier = useHasRole('verifier');
  const isQa = useHasRole('qa_manager');
  const canSeeTrail = useHasRole('auditor', 'qa_manager', 'admin');
  const q = useLot(id);
  if (q.isPending) return <PageLoading />;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const lot = q.data;
  const current = lot.tests.find((t) => t.id === lot.currentTestId) ?? null;
  const canStart =
    isOperator &&
    lot.status === 'quarantine' &&
    lot.sampledAt !== null &&
    !current &&
    ['awaiting-testing', 'testing', 'retest-authorised'].includes(lot.identityStatus);
  return (
    <div className="max-w-7xl">
      <PageHeader
        eyebrow={
          <Link to="/lots" className="text-petrol underline underline-offset-2">
            Lots
          </Link>
        }
        title={
          <span className="flex flex-wrap items-center gap-3">
            <span data-testid="lot-number">{lot.lotNumber}</span>
            <span data-testid="identity-status">
              <IdentityStatusBadge status={lot.identityStatus} />
            </span>
            <LotStatusText status={lot.status} />
          </span>
        }
        subtitle={`${lot.material.name} (${lot.material.code}) · ${lot.supplier}${lot.manufacturer ? ` (made by ${lot.manufacturer.name})` : ''}, supplier lot ${lot.supplierLot} · ${lot.containerCount} container(s) · received ${lot.receivedDate}${lot.source.firstDelivery ? ' · first delivery from a new source' : ''}`}
        actions={
          <>
            <RecordHistory
              entityType="lot"
              entityId={lot.id}
              label={`lot ${lot.lotNumber}`}
              size="bench"
              showTrailLink={canSeeTrail}
            />
            <a
              className={buttonClass('secondary', 'bench')}
              href={labelsPdfUrl(lot.id)}
              target="_blank"
              rel="noreferrer"
            >
              Print container labels (PDF)
            </a>
          </>
        }
      />
      <LotImpactNotices lotId={lot.id} />
      <div className="mb-5 flex flex-col gap-2">
        {lot.notes && <p className="text-sm">Notes: {lot.notes}</p>}
        {lot.source.conditions && (
          <p className="text-sm text-amber-ink">Conditional source. QA's conditions: {lot.source.conditions}</p>
        )}
        <p className="text-sm text-muted">
          Registered by {lot.createdBy.name}, <DateTime value={lot.createdAt} />.
        </p>
        <Certificate lot={lot} />
        {lot.investigations.map((inv) => (
          <p key={inv.id} className="text-sm">
            Investigation{' '}
            <Link className="font-medium text-petrol underline underline-offset-2" to={`/investigations/${inv.id}`}>
              {inv.number}
            </Link>{' '}
            ·{' '}
            {inv.status === 'closed'
              ? `closed (${inv.decision === 'confirmed' ? 'failure confirmed' : 'result invalidated'})`
              : inv.status === 'retest-authorised'
                ? 'retest authorised'
                : 'open'}
          </p>
        ))}
      </div>

      <SamplingPanel lotId={lot.id} me={user} canSample={isOperator && lot.status === 'quarantine'} />
      {canStart && <StartAttempt lot={lot} />}
      {current?.status === 'in-progress' &&
        (isOperator ? (
          <section aria-labelledby="bench">
            <h2 id="bench" className="sr-only">
              Testing
            </h2>
            <TestBench testId={current.id} lotId={lot.id} me={user} />
            <TestAcquisitions testId={current.id} lotId={lot.id} live />
          </section>
        ) : (
          <p className="text-sm">Attempt {current.attempt} is in progress.</p>
        ))}
      {current?.status === 'awaiting-verification' && (
        <section className="rounded-md border border-line bg-white p-4" aria-label="Awaiting verification">
          <p className="mb-2">
            Attempt {current.attempt} was signed performed by {current.performedBy?.name} and awaits verification by a
            second person.
          </p>
          {isVerifier && current.performedBy?.id !== user.id && (
            <Link className={buttonClass('primary', 'bench')} to={`/tests/${current.id}/review`}>
              Review and verify
            </Link>
          )}
        </section>
      )}

      <section aria-labelledby="containers" className="mt-6">
        <h2 id="containers" className="mb-2 text-lg">
          Containers and their verified result
        </h2>
        <div className="flex flex-wrap gap-2">
          {lot.containers.slice(0, 200).map((c) => (
            <div
              key={c.id}
              className="flex items-center gap-2 rounded-md border border-line bg-white px-2 py-1 text-sm"
              data-testid={`lot-container-${c.label}`}
            >
              <span className="tabular-nums">{c.label}</span>
              {!c.sampled && <span className="text-muted">not sampled</span>}
              {c.effective ? (
                <Verdict verdict={c.effective.verdict} size="sm" />
              ) : (
                <Verdict verdict="pending" label="No verified result" size="sm" />
              )}
            </div>
          ))}
          {lot.containers.length > 200 && (
            <p className="text-sm text-muted">… and {lot.containers.length - 200} more.</p>
          )}
        </div>
      </section>

      <DispositionPanel lotId={lot.id} me={user} canRecord={isOperator || isQa} canDecide={isQa} />

      <section aria-labelledby="attempts" className="mt-6">
        <h2 id="attempts" className="mb-2 text-lg">
          Test attempts
        </h2>
        {lot.tests.length === 0 ? (
          <p className="text-sm text-muted">No test attempt yet.</p>
        ) : (
          <ol className="flex flex-col gap-3">
            {lot.tests.map((t) => (
              <li key={t.id} className="rounded-md border border-line bg-white p-3">
                <div className="mb-1 flex flex-wrap items-center gap-3 text-sm">
                  <span className="font-medium">Attempt {t.attempt}</span>
                  <span>{TEST_STATUS[t.status] ?? t.status}</span>
                  {t.retestOfInvestigationId && <span className="text-muted">retest authorised by QA</span>}
                  <span className="text-muted">{t.measurements} measurement(s)</span>
                  <Link className="text-petrol underline underline-offset-2" to={`/tests/${t.id}/review`}>
                    Show results
                  </Link>
                </div>
                {t.returnedReason && <p className="text-sm">Returned: {t.returnedReason}</p>}
                <SignatureList signatures={t.signatures} />
              </li>
            ))}
          </ol>
        )}
      </section>
    </div>
  );
}
