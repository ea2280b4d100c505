/**
 * One investigation: failing containers with the library hint (or, for a trend signal, the signal
 * and its measurements), phase I record, decision or conclusion, signatures.
 */
import { Link, useParams } from 'react-router-dom';
import { PageLoading } from '../app/lazy-page';
import { useHasRole, useSession } from '../app/session';
import { DateTime } from '../components/DateTime';
import { ErrorNote } from '../components/ErrorNote';
import { PageHeader } from '../components/PageHeader';
import { RecordHistory } from '../features/audit/components/RecordHistory';
import { Verdict } from '../components/Verdict';
import { formatScore } from '../lib/format';
import { PHASE1_ITEMS, PHASE1_LABELS } from '../../server/modules/investigations/contract';
import { useInvestigation } from '../features/investigations/api';
import { ConcludeForm } from '../features/investigations/components/ConcludeForm';
import { DecisionForms } from '../features/investigations/components/DecisionForms';
import { InvestigationStatus } from '../features/investigations/components/InvestigationStatus';
import { Phase1Form } from '../features/investigations/components/Phase1Form';
import { TrendSubjectView } from '../features/investigations/components/TrendSubjectView';
import { MeasurementOverlay } from '../features/testing/components/MeasurementResult';

const MEANINGS: Record<string, string> = {
  'phase-1-recorded': 'Phase I laboratory check recorded',
  'result-invalidated': 'Result invalidated, retest authorised',
  'failure-confirmed': 'Failure confirmed, lot rejected',
  'investigation-opened': 'Investigation of a trend signal opened',
  'trend-concluded': 'Investigation of a trend signal concluded',
};

export default function InvestigationPage() {
  const id = Number(useParams().id);
  const { user } = useSession();
  const isQa = useHasRole('qa_manager');
  const canSeeTrail = useHasRole('auditor', 'qa_manager', 'admin');
  const q = useInvestigation(id);
  if (q.isPending) return <PageLoading />;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const inv = q.data;
  return (
    <div className="max-w-7xl">
      <PageHeader
        eyebrow={
          <Link to="/investigations" className="text-petrol underline underline-offset-2">
            Investigations
          </Link>
        }
        title={
          <span className="flex flex-wrap items-center gap-3">
            <span>{inv.number}</span>
            <InvestigationStatus inv={inv} />
          </span>
        }
        actions={
          <RecordHistory
            entityType="investigation"
            entityId={inv.id}
            label={`investigation ${inv.number}`}
            showTrailLink={canSeeTrail}
          />
        }
        subtitle={
          inv.kind === 'trend' ? (
            <>
              Trend signal · {inv.materialName} · opened <DateTime value={inv.openedAt} />
            </>
          ) : (
            <>
              Lot{' '}
              <Link to={`/lots/${inv.lotId}`} className="text-petrol underline underline-offset-2">
                {inv.lotNumber}
              </Link>{' '}
              · {inv.materialName} · attempt {inv.attempt} (
              <Link to={`/tests/${inv.testId}/review`} className="text-petrol underline underline-offset-2">
                results
              </Link>
              ) · opened <DateTime value={inv.openedAt} />
            </>
          )
        }
      />
      {inv.trend && <TrendSubjectView subject={inv.trend} />}
      {inv.kind !== 'trend' && (
        <section aria-labelledby="failing" className="mb-5">
          <h2 id="failing" className="mb-2 text-lg">
            Failing containers
          </h2>
          <ul className="flex flex-col gap-2">
            {inv.failing.map((f) => (
              <li
                key={f.containerId}
                className="rounded-md border border-line bg-white p-3 text-sm"
                data-testid={`failing-${f.label}`}
              >
                <div className="mb-1 flex flex-wrap items-center gap-3">
                  <span className="font-medium tabular-nums">{f.label}</span>
                  <Verdict verdict="fail" />
                  <span className="text-muted">correlation coefficient (r) {formatScore(f.score)}</span>
                  {inv.retestContainerIds.includes(f.containerId) && (
                    <span className="text-amber-ink">retest authorised</span>
                  )}
                </div>
                <p
                  className="mb-2 rounded-md border border-amber/50 bg-amber-soft px-3 py-2"
                  data-testid="library-hint"
                >
                  {f.hintText}
                </p>
                {f.explanation.length > 0 && (
                  <ul className="list-disc pl-5">
                    {f.explanation.map((e, i) => (
                      <li key={i}>{e}</li>
                    ))}
                  </ul>
                )}
                {/* The failing spectrum over its closest reference: what QA judges the cause by. */}
                <div className="mt-3">
                  <h3 className="mb-1 text-sm font-medium">Failing spectrum, closest reference and difference</h3>
                  <MeasurementOverlay measurementId={f.measurementId} label={f.label} />
                </div>
              </li>
            ))}
          </ul>
        </section>
      )}

      {inv.phase1 && (
        <section aria-labelledby="p1r" className="mb-5 rounded-md border border-line bg-white p-4 text-sm">
          <h2 id="p1r" className="mb-2 text-lg">
            Phase I laboratory check
          </h2>
          <dl className="grid grid-cols-[max-content_1fr] gap-x-4 gap-y-2">
            {PHASE1_ITEMS.map((k) => (
              <div key={k} className="contents">
                <dt className="font-medium">{PHASE1_LABELS[k].title}</dt>
                <dd>
                  {inv.phase1!.items[k].ok ? (
                    <Verdict verdict="pass" label="No laboratory error found" size="sm" />
                  ) : (
                    <Verdict verdict="fail" label="Laboratory error found" size="sm" />
                  )}{' '}
                  {inv.phase1!.items[k].note}
                </dd>
              </div>
            ))}
            <dt className="font-medium">Summary</dt>
            <dd>{inv.phase1.summary}</dd>
          </dl>
        </section>
      )}
      {inv.justification && (
        <p className="mb-5 text-sm">
          <span className="font-medium">
            {inv.decision === 'concluded'
              ? 'Conclusion'
              : `Decision (${inv.decision === 'confirmed' ? 'failure confirmed' : 'result invalidated'})`}{' '}
            by {inv.decidedBy?.name}:{' '}
          </span>
          {inv.justification}
        </p>
      )}

      {isQa && inv.status === 'open' && <Phase1Form inv={inv} me={user} />}
      {isQa && inv.status === 'phase1-recorded' && inv.kind === 'trend' && <ConcludeForm inv={inv} me={user} />}
      {isQa && inv.status === 'phase1-recorded' && inv.kind !== 'trend' && <DecisionForms inv={inv} me={user} />}
      {!isQa && (inv.status === 'open' || inv.status === 'phase1-recorded') && (
        <p className="text-sm text-muted">QA records the laboratory check and decides.</p>
      )}

      <section aria-labelledby="sigs" className="mt-6">
        <h2 id="sigs" className="mb-2 text-lg">
          Signatures
        </h2>
        {inv.signatures.length === 0 ? (
          <p className="text-sm text-muted">Not signed yet.</p>
        ) : (
          <ul className="flex flex-col gap-1 text-sm">
            {inv.signatures.map((s) => (
              <li key={s.id}>
                <span className="font-medium">{s.printedName}</span> · {MEANINGS[s.meaning] ?? s.meaning} ·{' '}
                <DateTime value={s.signedAt} seconds />
              </li>
            ))}
          </ul>
        )}
      </section>
    </div>
  );
}
