/** Work-queue widget of QA: integrity alerts waiting for a sign-off. */
import { AlertsList } from '../features/integrity/components/AlertsList';

export function OpenIntegrityAlertsWidget() {
  return <AlertsList status="open" empty="No integrity alert is open." />;
}
