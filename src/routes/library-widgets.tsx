/** Work-queue widgets of the reference library and the instrument registry (composed here: features do not import each other). */
import { useSession } from '../app/session';
import { AwaitingApprovalList } from '../features/library/components/AwaitingApprovalWidget';
import { CheckDueList, OpenImpactAssessmentsList } from '../features/instruments/components/CheckDueWidget';

export function ReferencesAwaitingApprovalWidget() {
  const { user } = useSession();
  return <AwaitingApprovalList myUserId={user.id} />;
}

export function InstrumentsCheckDueWidget() {
  return <CheckDueList />;
}

export function OpenImpactAssessmentsWidget() {
  return <OpenImpactAssessmentsList />;
}
