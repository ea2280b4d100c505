/** Work-queue widgets of testing and investigations (composed here: features do not import each other). */
import { OpenInvestigationsList } from '../features/investigations/components/OpenInvestigationsWidget';
import {
  LotsAwaitingDispositionList,
  LotsToSampleList,
  LotsToTestList,
  RetestsDueList,
  TestsToVerifyList,
} from '../features/testing/components/Widgets';
import { CertificatesToIssueList } from '../features/testing/components/Widgets';
import { BlockedContainersList } from '../features/testing/components/Provenance';
import { useSession } from '../app/session';

export function LotsToTestWidget() {
  return <LotsToTestList />;
}

export function TestsToVerifyWidget() {
  return <TestsToVerifyList />;
}

export function OpenInvestigationsWidget() {
  return <OpenInvestigationsList />;
}

export function LotsToSampleWidget() {
  return <LotsToSampleList />;
}

export function LotsAwaitingDispositionWidget() {
  return <LotsAwaitingDispositionList />;
}

export function RetestsDueWidget() {
  return <RetestsDueList />;
}

export function BlockedContainersWidget() {
  const { user } = useSession();
  return <BlockedContainersList me={user} />;
}

export function CertificatesToIssueWidget() {
  return <CertificatesToIssueList />;
}
