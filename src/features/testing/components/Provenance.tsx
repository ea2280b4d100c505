/**
 * Provenance in the testing screens (docs/provenance.md): every measurement of an attempt in
 * order for the verifier, handing an attempt over to another operator, and QA's release of a
 * container blocked after too many invalid measurements.
 */
import { useId, useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Select, Textarea } from '../../../components/Field';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { Verdict } from '../../../components/Verdict';
import { formatScore } from '../../../lib/format';
import { NOT_STATED } from '../../../../server/modules/provenance/contract';
import {
  useBlockedContainers,
  useHandOver,
  useHandOverCandidates,
  useReleaseBlock,
  type BlockedContainer,
  type ReviewMeasurementEntry,
} from '../api';
import { verdictLabel } from './MeasurementResult';
import { mutationSigning } from '../../../lib/signing';

function stated(e: ReviewMeasurementEntry): string {
  const p = e.provenance;
  const when =
    p.acquiredJudgement === 'not-stated' || p.acquiredJudgement === 'not-recorded'
      ? `acquired: ${NOT_STATED}`
      : p.acquiredJudgement === 'unreadable'
        ? `acquired: "${p.acquiredText}" (not a date Drumline can read; not judged)`
        : `acquired ${p.acquiredText}`;
  const inst = p.instrumentText ? `instrument "${p.instrumentText}"` : `instrument: ${NOT_STATED}`;
  const serial = p.statedSerial
    ? `serial ${p.statedSerial} (${p.serialJudgement === 'matches' ? "the test instrument's" : 'no serial registered for the test instrument'})`
    : `serial: ${NOT_STATED}`;
  return `${when}; ${inst}; ${serial}`;
}

/** Every measurement of the attempt, including invalid and superseded ones, oldest first. */
export function MeasurementHistory({ entries }: { entries: ReviewMeasurementEntry[] }) {
  return (
    <section aria-labelledby="every-measurement" className="rounded-md border border-line bg-white p-4">
      <h3 id="every-measurement" className="mb-1 font-medium">
        Every measurement of this attempt, in order
      </h3>
      <p className="mb-2 text-sm text-muted">
        Including invalid and superseded measurements, with who measured, when, why a container was measured again, and
        what each file states about its acquisition.
      </p>
      <div className="overflow-x-auto">
        <table className="w-full text-left text-sm" data-testid="measurement-history" aria-label="Every measurement">
          <thead>
            <tr className="border-b border-line text-muted">
              <th className="py-1 pr-3">#</th>
              <th data-key-column="container" className="py-1 pr-3">
                Container
              </th>
              <th data-key-column="result" className="py-1 pr-3">
                Result
              </th>
              <th className="py-1 pr-3">Counts</th>
              <th className="py-1 pr-3">Measured by, uploaded</th>
              <th className="py-1 pr-3">Why again</th>
              <th className="py-1">The file states</th>
            </tr>
          </thead>
          <tbody>
            {entries.map((e) => (
              <tr key={e.id} className="border-b border-line/60 align-top">
                <td className="py-1 pr-3 tabular-nums">{e.id}</td>
                <td className="py-1 pr-3">{e.label}</td>
                <td className="py-1 pr-3">
                  <Verdict verdict={e.verdict} label={verdictLabel(e.verdict)} />{' '}
                  <span className="text-muted">{formatScore(e.matchScore)}</span>
                </td>
                <td className="py-1 pr-3">{e.state === 'current' ? 'current result' : 'superseded'}</td>
                <td className="py-1 pr-3">
                  {e.measuredBy}, <DateTime value={e.measuredAt} />
                </td>
                <td className="py-1 pr-3">{e.provenance.remeasureReason ?? '—'}</td>
                <td className="py-1">
                  <p data-testid="measurement-source">
                    {e.provenance.source === 'export-folder' ? e.provenance.sourceText : 'uploaded by hand'}
                  </p>
                  {e.provenance.clockWarning && (
                    <p role="note" className="mt-1 rounded bg-amber-soft px-2 py-1">
                      Instrument clock: {e.provenance.clockWarning}
                    </p>
                  )}
                  {stated(e)}
                  {e.provenance.identifierFindings.length > 0 && (
                    <p className="mt-1 rounded bg-amber-soft px-2 py-1">
                      The file names another record:{' '}
                      {e.provenance.identifierFindings.map((f) => `"${f.text}" (${f.belongsTo})`).join('; ')}.{' '}
                      {e.provenance.identifiersConfirmed
                        ? 'The operator confirmed the spectrum is of this container.'
                        : ''}
                    </p>
                  )}
                </td>
              </tr>
            ))}
          </tbody>
        </table>
      </div>
    </section>
  );
}

/** Hands an attempt in progress over to another operator. */
export function HandOverPanel({ lotId, testId }: { lotId: number; testId: number }) {
  const id = useId();
  const [open, setOpen] = useState(false);
  const [to, setTo] = useState('');
  const [reason, setReason] = useState('');
  const candidates = useHandOverCandidates(testId, open);
  const hand = useHandOver(lotId, testId);
  if (!open)
    return (
      <Button variant="quiet" onClick={() => setOpen(true)}>
        Hand over this attempt…
      </Button>
    );
  return (
    <section aria-label="Hand over this attempt" className="rounded-md border border-line bg-white p-4">
      <p className="mb-2 text-sm">
        Only the operator holding an attempt adds its measurements. Hand it over to a colleague who continues; the
        hand-over is recorded with your reason.
      </p>
      {candidates.isError && <ErrorNote error={candidates.error} />}
      <div className="flex flex-wrap items-end gap-3">
        <Field id={`${id}-to`} label="Hand over to">
          <Select id={`${id}-to`} value={to} onChange={(e) => setTo(e.target.value)}>
            <option value="">Choose an operator</option>
            {(candidates.data ?? []).map((c) => (
              <option key={c.id} value={c.id}>
                {c.name}
              </option>
            ))}
          </Select>
        </Field>
        <Field id={`${id}-reason`} label="Reason" className="min-w-64 flex-1">
          <Textarea id={`${id}-reason`} value={reason} onChange={(e) => setReason(e.target.value)} />
        </Field>
      </div>
      {hand.isError && <ErrorNote error={hand.error} />}
      <div className="mt-3 flex gap-2">
        <Button
          variant="primary"
          disabled={!to || reason.trim().length < 5 || hand.isPending}
          onClick={() =>
            hand.mutate({ toUserId: Number(to), reason: reason.trim() }, { onSuccess: () => setOpen(false) })
          }
        >
          Hand over
        </Button>
        <Button variant="quiet" onClick={() => setOpen(false)}>
          Cancel
        </Button>
      </div>
    </section>
  );
}

/** QA: containers blocked after too many invalid measurements, each with a signed release. */
export function BlockedContainersList({ me }: { me: { fullName: string; signedOnce: boolean } }) {
  const q = useBlockedContainers(true);
  const release = useReleaseBlock();
  const [target, setTarget] = useState<BlockedContainer | null>(null);
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  if (q.data.length === 0) return <p className="text-sm text-muted">No container is blocked.</p>;
  return (
    <>
      <ul className="divide-y divide-line rounded-md border border-line bg-white" data-testid="blocked-containers">
        {q.data.map((b) => (
          <li key={b.blockId} className="flex flex-wrap items-center gap-x-4 gap-y-1 px-3 py-1 text-sm">
            <span className="font-medium">
              {b.label} · lot {b.lotNumber}
            </span>
            <span className="text-muted">
              {b.invalidCount} invalid measurements, blocked <DateTime value={b.blockedAt} />
            </span>
            <Button variant="secondary" onClick={() => setTarget(b)}>
              Release for measuring…
            </Button>
          </li>
        ))}
      </ul>
      <ReasonSignatureDialog
        open={target !== null}
        title="Release a blocked container"
        meaningText={`decided how the lab goes on with container ${target?.label ?? ''} and release it for further measurements`}
        record={
          target
            ? `Container ${target.label} of lot ${target.lotNumber}, ${target.invalidCount} invalid measurements`
            : ''
        }
        confirmLabel="Sign the release"
        reason={{
          label: 'How the lab goes on, and why',
          minLength: 20,
          tooShort: 'Write how the lab goes on and why (at least 20 characters).',
        }}
        {...mutationSigning(me, release, () => setTarget(null))}
        onSign={(signature, reason) =>
          target &&
          release.mutate({ containerId: target.containerId, reason, signature }, { onSuccess: () => setTarget(null) })
        }
      />
    </>
  );
}
