/**
 * QA's reconciliation per test (docs/instrument-intake.md): every acquisition received from the
 * test's instrument during the test window, assigned or not, and the test's hand uploads, so a
 * discarded acquisition cannot hide.
 */
import { useEffect, useRef } from 'react';
import { useQueryClient } from '@tanstack/react-query';
import { DateTime } from '../../../components/DateTime';
import { Panel } from '../../../components/Panel';
import { qk } from '../../../lib/query-keys';
import { ErrorNote } from '../../../components/ErrorNote';
import { useTestAcquisitions } from '../api';
import { AcquisitionTable } from './IntakePanel';

/**
 * `live` (the operator's bench): refreshed every few seconds, and when a file from the folder became
 * a measurement the test (and its lot) is read again, so the bench shows the new result at once.
 */
export function TestAcquisitions({ testId, lotId, live = false }: { testId: number; lotId?: number; live?: boolean }) {
  const q = useTestAcquisitions(testId, live);
  const qc = useQueryClient();
  const recorded = q.data?.acquisitions.filter((a) => a.measurementId !== null).length ?? 0;
  const seen = useRef(recorded);
  useEffect(() => {
    if (recorded === seen.current) return;
    seen.current = recorded;
    void qc.invalidateQueries({ queryKey: qk.tests.one(testId) });
    if (lotId) void qc.invalidateQueries({ queryKey: qk.lots.one(lotId) });
  }, [recorded, testId, lotId, qc]);
  if (q.isPending) return null;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const v = q.data;
  return (
    <Panel
      id="test-acq-h"
      level={3}
      title={`Acquisitions on ${v.instrumentName ?? 'the instrument'} during this attempt`}
      className="mt-6 p-4"
      titleClassName="font-medium"
      testId="test-acquisitions"
    >
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
    </Panel>
  );
}
