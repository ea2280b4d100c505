/**
 * The operator's bench for one test attempt in progress: instrument, scanner input and single
 * upload, multi-file upload, the containers with their latest results, and "Sign as performed".
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { HandOverPanel } from './Provenance';
import { Verdict } from '../../../components/Verdict';
import { formatScore } from '../../../lib/format';
import { useAfterUpload, usePerform, useSwitchInstrument, useTest, type TestDetail } from '../api';
import { InstrumentPicker } from './InstrumentPicker';
import { MeasurementResult, verdictLabel } from './MeasurementResult';
import { MultiFileUpload } from './MultiFileUpload';
import { ScanUpload, selectionProblem } from './ScanUpload';
import { mutationSigning } from '../../../lib/signing';

function ContainerRows({
  test,
  selectedId,
  onSelect,
}: {
  test: TestDetail;
  selectedId: number | null;
  onSelect: (id: number) => void;
}) {
  return (
    <table className="w-full text-sm" aria-label="Containers of this attempt">
      <thead>
        <tr className="border-b border-line text-left text-muted">
          <th data-key-column="container" className="py-1 pr-3 font-medium">
            Container
          </th>
          <th data-key-column="result" className="py-1 pr-3 font-medium">
            Latest result
          </th>
          <th data-key-column="score" className="py-1 pr-3 text-right font-medium">
            Correlation coefficient (r)
          </th>
          <th className="py-1 pr-3 text-right font-medium">Measurements</th>
          <th className="py-1 font-medium" />
        </tr>
      </thead>
      <tbody>
        {test.containers
          .filter((c) => c.inScope)
          .map((c) => (
            <tr
              key={c.id}
              className={`border-b border-line/60 ${selectedId === c.id ? 'bg-petrol-soft' : ''}`}
              data-testid={`container-${c.label}`}
            >
              <td className="py-1 pr-3 font-medium whitespace-nowrap tabular-nums">{c.label}</td>
              <td className="py-1 pr-3">
                {c.latest ? (
                  <Verdict verdict={c.latest.verdict} label={verdictLabel(c.latest.verdict)} size="sm" />
                ) : (
                  <Verdict verdict="pending" label="Not measured" size="sm" />
                )}
              </td>
              <td className="py-1 pr-3 text-right tabular-nums">{formatScore(c.latest?.matchScore)}</td>
              <td className="py-1 pr-3 text-right tabular-nums">{c.measurements.length}</td>
              <td className="py-1">
                <Button size="bench" variant="quiet" onClick={() => onSelect(c.id)} aria-label={`Select ${c.label}`}>
                  Select
                </Button>
              </td>
            </tr>
          ))}
      </tbody>
    </table>
  );
}

export function TestBench({
  testId,
  lotId,
  me,
}: {
  testId: number;
  lotId: number;
  me: { fullName: string; signedOnce: boolean };
}) {
  const q = useTest(testId);
  const after = useAfterUpload(lotId, testId);
  const perform = usePerform(lotId, testId);
  const switcher = useSwitchInstrument(lotId, testId);
  const [selected, setSelected] = useState<number | null>(null);
  const [problem, setProblem] = useState<string | null>(null);
  // A container refused for upload (failed) can still be looked at: its result shows, no file drop.
  const [viewed, setViewed] = useState<number | null>(null);
  const [mode, setMode] = useState<'scan' | 'many'>('scan');
  const [signing, setSigning] = useState(false);
  const [changeInstrument, setChangeInstrument] = useState(false);
  if (q.isPending) return <p className="text-sm text-muted">Loading the test…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const t = q.data;
  const latestSelected = t.containers.find((c) => c.id === (selected ?? viewed))?.latest ?? null;
  const r = t.readiness;
  const failed = t.containers.filter((c) => c.inScope && c.latest?.verdict === 'fail').map((c) => c.label);
  return (
    <div className="flex flex-col gap-5">
      <div className="flex flex-wrap items-center gap-x-6 gap-y-2 text-sm">
        <span>
          Attempt <strong>{t.attempt}</strong>
          {t.retestOfInvestigationId ? ' (retest authorised by QA)' : ''}
        </span>
        <span>
          Identity method version <strong>{t.method?.version}</strong>
        </span>
        <span>
          Instrument <strong>{t.instrument?.name ?? '—'}</strong>{' '}
          <Button variant="quiet" onClick={() => setChangeInstrument((v) => !v)}>
            {changeInstrument ? 'Keep this instrument' : 'Change instrument'}
          </Button>
        </span>
        <span className="tabular-nums">
          {r.measured} of {r.inScope} containers have a valid result
        </span>
        <HandOverPanel lotId={lotId} testId={testId} />
      </div>
      {changeInstrument && (
        <InstrumentPicker
          current={t.instrument?.id}
          actionLabel="Use this instrument"
          busy={switcher.isPending}
          error={switcher.error}
          onPick={(id) => switcher.mutate(id, { onSuccess: () => setChangeInstrument(false) })}
        />
      )}

      <div role="tablist" aria-label="How to upload" className="flex gap-2">
        <Button
          role="tab"
          aria-selected={mode === 'scan'}
          size="bench"
          variant={mode === 'scan' ? 'primary' : 'secondary'}
          onClick={() => setMode('scan')}
        >
          One container
        </Button>
        <Button
          role="tab"
          aria-selected={mode === 'many'}
          size="bench"
          variant={mode === 'many' ? 'primary' : 'secondary'}
          onClick={() => setMode('many')}
        >
          Several files
        </Button>
      </div>
      {mode === 'scan' ? (
        <ScanUpload
          test={t}
          selectedId={selected}
          onSelect={setSelected}
          onUploaded={after}
          problem={problem}
          onProblem={setProblem}
        />
      ) : (
        <MultiFileUpload test={t} onUploaded={after} />
      )}

      <div className="grid items-start gap-5 xl:grid-cols-[minmax(0,1fr)_minmax(0,1.2fr)]">
        <ContainerRows
          test={t}
          selectedId={selected ?? viewed}
          onSelect={(id) => {
            const c = t.containers.find((x) => x.id === id);
            const refusal = c ? selectionProblem(t, c) : null;
            setProblem(refusal);
            setSelected(refusal ? null : id);
            setViewed(id);
            setMode('scan');
            if (refusal) window.scrollTo({ top: 0, behavior: 'smooth' });
          }}
        />
        <div>
          {latestSelected ? (
            <MeasurementResult measurementId={latestSelected.id} compact />
          ) : (
            <p className="text-sm text-muted">Select a container to see its latest result.</p>
          )}
        </div>
      </div>

      <section aria-label="Sign as performed" className="rounded-md border border-line bg-white p-4">
        {r.ready && failed.length > 0 ? (
          <p className="mb-3 text-sm" data-testid="sign-readiness">
            Every container has a result, and{' '}
            <strong className="text-fail">
              {failed.length === 1 ? 'container' : 'containers'} {failed.join(', ')} failed
            </strong>
            . Sign the test as performed; a second person verifies it, and QA investigates the failure.
          </p>
        ) : r.ready ? (
          <p className="mb-3 text-sm" data-testid="sign-readiness">
            Every container has a valid result. Sign the test as performed; a second person then verifies it.
          </p>
        ) : (
          <p className="mb-3 text-sm text-muted">
            {r.missing.length > 0 && `Still to measure: ${r.missing.join(', ')}. `}
            {r.invalid.length > 0 && `Invalid measurement, measure again: ${r.invalid.join(', ')}.`}
          </p>
        )}
        <Button size="bench" variant="primary" disabled={!r.ready} onClick={() => setSigning(true)}>
          Sign as performed
        </Button>
      </section>
      <SignatureDialog
        open={signing}
        title="Sign the identity test as performed"
        meaningText={`performed the identity test of lot ${t.lot.lotNumber}, attempt ${t.attempt}, and the results shown are those I measured`}
        record={`Lot ${t.lot.lotNumber} (${t.lot.material.name}), ${r.inScope} container(s)`}
        confirmLabel="Sign as performed"
        {...mutationSigning(me, perform, () => setSigning(false))}
        onSign={(credentials) => perform.mutate(credentials, { onSuccess: () => setSigning(false) })}
      />
    </div>
  );
}
