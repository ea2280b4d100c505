/** Periodic audit-trail review (EU GMP Annex 11 §9): when it is due, the recorded reviews, recording a new one. */
import { useHasRole, useSession } from '../app/session';
import { PageHeader } from '../components/PageHeader';
import { ReviewForm } from '../features/audit-review/components/ReviewForm';
import { ReviewDueNote, ReviewsList } from '../features/audit-review/components/ReviewsList';

export default function AuditReviewsPage() {
  const { user } = useSession();
  const isQa = useHasRole('qa_manager');
  return (
    <div className="flex max-w-7xl flex-col gap-6">
      <PageHeader
        title="Audit-trail reviews"
        subtitle="QA's regular review of the GMP-relevant events of the audit trail, with exception lists, findings and actions, signed."
      />
      <ReviewDueNote />
      {isQa && <ReviewForm me={{ fullName: user.fullName, signedOnce: user.signedOnce }} />}
      <section aria-labelledby="reviews" className="flex flex-col gap-2">
        <h2 id="reviews" className="text-lg">
          Recorded reviews
        </h2>
        <ReviewsList />
      </section>
    </div>
  );
}
