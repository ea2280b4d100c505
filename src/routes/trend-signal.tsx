/** One trend signal: what fired where, its chart, and QA's acknowledgement. */
import { Link, useParams } from 'react-router-dom';
import { PageLoading } from '../app/lazy-page';
import { useHasRole, useSession } from '../app/session';
import { DateTime } from '../components/DateTime';
import { ErrorNote } from '../components/ErrorNote';
import { PageHeader } from '../components/PageHeader';
import { RecordHistory } from '../features/audit/components/RecordHistory';
import { METRIC_LABELS, TREND_CAUTION, useSignal } from '../features/trending/api';
import { ChartPanel } from '../features/trending/components/ChartPanel';
import { AcknowledgePanel, OpenInvestigationPanel } from '../features/trending/components/Signals';

export default function TrendSignalPage() {
  const id = Number(useParams().id);
  const isQa = useHasRole('qa_manager');
  const { user } = useSession();
  const q = useSignal(id);
  if (q.isPending) return <PageLoading />;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const s = q.data;
  return (
    <div className="flex max-w-7xl flex-col gap-5">
      <PageHeader
        eyebrow={
          <Link to="/trending" className="text-petrol underline underline-offset-2">
            Trends
          </Link>
        }
        title={`Trend signal ${s.id}: ${s.materialName}`}
        subtitle={`${s.scopeLabel} · ${METRIC_LABELS[s.metric].title} · method version ${s.methodVersion}`}
        actions={
          <RecordHistory entityType="trend_signal" entityId={s.id} label={`trend signal ${s.id}`} showTrailLink />
        }
      />
      <section className="flex flex-col gap-1 text-sm" aria-label="The signal">
        <p className="font-medium">
          {s.status === 'open'
            ? '⚠ Open early warning'
            : s.status === 'investigated'
              ? '✓ Under investigation'
              : '✓ Acknowledged'}
          : {s.ruleText}
        </p>
        <p>{s.detail}</p>
        <p className="text-muted">
          Raised <DateTime value={s.raisedAt} /> by the trend scan. Rule source: {s.ruleSource}.
        </p>
        <p className="rounded-md border border-line bg-amber-soft px-3 py-2 text-amber-ink" role="note">
          {TREND_CAUTION}
        </p>
        {s.status === 'investigated' && s.investigationId && (
          <p data-testid="signal-investigation">
            Investigated in{' '}
            <Link to={`/investigations/${s.investigationId}`} className="text-petrol underline underline-offset-2">
              {s.investigationNumber}
            </Link>
            .
          </p>
        )}
        {s.status === 'acknowledged' && (
          <p>
            Acknowledged by {s.acknowledgedBy?.name} on <DateTime value={s.acknowledgedAt} />: {s.ackComment}
          </p>
        )}
      </section>
      {isQa && s.status === 'open' && <AcknowledgePanel signal={s} />}
      {isQa && s.status === 'open' && <OpenInvestigationPanel signal={s} me={user} />}
      <ChartPanel filter={{ methodId: s.methodId, metric: s.metric, scope: s.scopeKind, value: s.scopeValue }} />
    </div>
  );
}
