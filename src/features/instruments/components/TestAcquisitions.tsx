/**
 * QA's reconciliation per test (docs/instrument-intake.md): every acquisition received from the
 * test's instrument during the test window, assigned or not, and the test's hand uploads, so a
 * discarded acquisition cannot hide.
 */
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { useTestAcquisitions } from '../api';
import { AcquisitionTable } from './IntakePanel';

export function TestAcquisitions({ testId, live = false }: { testId: number; live?: boolean }) {
  const q = useTestAcquisitions(testId, live);
  if (q.isPending) return null;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const v = q.data;
  return (
    <section aria-labelledby="test-acq-h" className="mt-6 rounded-md border border-line bg-white p-4">
      <h3 id="test-acq-h" className="font-medium">
        Acquisitions on {v.instrumentName ?? 'the instrument'} during this attempt
      </h3>
      <p className="mb-2 text-sm text-muted">
        From <DateTime value={v.from} /> to <DateTime value={v.to} />: every file received from the instrument&apos;s
        export folder, whatever became of it, and the spectra uploaded by hand.
      </p>
      <AcquisitionTable rows={v.acquisitions} label="Acquisitions during this attempt" />
      <p className="mt-2 text-sm" data-testid="manual-uploads">
        Uploaded by hand:{' '}
        {v.manualUploads.length
          ? v.manualUploads
              .map((m) => `${m.label} (${m.fileName}, measurement ${m.measurementId}, ${m.uploadedBy})`)
              .join('; ')
          : 'none'}
      </p>
    </section>
  );
}
