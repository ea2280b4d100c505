/** Work-queue widgets of QA: open trend signals, and the audit-trail review when it is due. */
import { Link } from 'react-router-dom';
import { ReviewDueNote } from '../features/audit-review/components/ReviewsList';
import { SignalsList } from '../features/trending/components/Signals';

export function OpenTrendSignalsWidget() {
  return <SignalsList status="open" empty="No trend signal is open." />;
}

export function AuditReviewDueWidget() {
  return (
    <div className="flex flex-wrap items-center gap-3">
      <ReviewDueNote />
      <Link to="/audit-reviews" className="text-sm font-medium text-petrol underline underline-offset-2">
        Audit-trail reviews
      </Link>
    </div>
  );
}
