/** Review of one test attempt: what the verifier checks before signing (also readable by QA and auditors). */
import { Link, useParams } from 'react-router-dom';
import { PageLoading } from '../app/lazy-page';
import { useHasRole, useSession } from '../app/session';
import { ErrorNote } from '../components/ErrorNote';
import { PageHeader } from '../components/PageHeader';
import { RecordHistory } from '../features/audit/components/RecordHistory';
import { useReview } from '../features/testing/api';
import { ReviewView } from '../features/testing/components/Review';
import { SignatureList } from '../features/testing/components/Signatures';
import { ReviewExceptions } from '../features/trending/components/ReviewExceptions';
import { TestAcquisitions } from '../features/instruments/components/TestAcquisitions';

export default function TestReviewPage() {
  const id = Number(useParams().id);
  const { user } = useSession();
  const isVerifier = useHasRole('verifier');
  const canSeeTrail = useHasRole('auditor', 'qa_manager', 'admin');
  const q = useReview(id);
  if (q.isPending) return <PageLoading />;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const t = q.data.test;
  return (
    <div className="max-w-7xl">
      <PageHeader
        eyebrow={
          <Link to={`/lots/${t.lot.id}`} className="text-petrol underline underline-offset-2">
            Lot {t.lot.lotNumber}
          </Link>
        }
        title={`Review of attempt ${t.attempt}, lot ${t.lot.lotNumber}`}
        actions={
          <RecordHistory
            entityType="identity_test"
            entityId={t.id}
            label={`attempt ${t.attempt} of lot ${t.lot.lotNumber}`}
            showTrailLink={canSeeTrail}
          />
        }
        subtitle={`${t.lot.material.name} · ${t.statusLabel} · ${t.readiness.inScope} container(s)${t.retestOfInvestigationId ? ' · retest authorised by QA' : ''} · instrument ${t.instrument?.name ?? '—'}`}
      />
      <ReviewExceptions testId={t.id} />
      <div className="mb-4">
        <SignatureList signatures={t.signatures} />
        {t.returnedReason && <p className="mt-1 text-sm">Returned: {t.returnedReason}</p>}
      </div>
      <ReviewView
        data={q.data}
        me={{ id: user.id, fullName: user.fullName, signedOnce: user.signedOnce, isVerifier }}
      />
      <TestAcquisitions testId={t.id} />
    </div>
  );
}
