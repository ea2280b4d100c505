/**
 * The look-back of failed instrument checks: each impact assessment with the measurements made
 * since the last passing check, the notices beside the lots and certificates, and QA's signed
 * decision (no impact, or retest of named containers). Also the notices of one lot.
 */
import { useState } from 'react';
import { Link } from 'react-router-dom';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { Field, Select } from '../../../components/Field';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { CHECK_TYPE_LABELS, useDecideImpact, useImpactAssessments, useLotNotices, type ImpactAssessment } from '../api';

type Me = { fullName: string; signedOnce: boolean };

function DecisionDialog({ a, me, onClose }: { a: ImpactAssessment | null; me: Me; onClose: () => void }) {
  const decide = useDecideImpact();
  const [decision, setDecision] = useState<'none' | 'retest'>('retest');
  const [picked, setPicked] = useState<number[]>([]);
  const containers = a ? [...new Map(a.measurements.map((m) => [m.containerId, m.containerLabel])).entries()] : [];
  return (
    <ReasonSignatureDialog
      open={!!a}
      title={a ? `Impact of the failed ${CHECK_TYPE_LABELS[a.checkType]} check on ${a.instrumentName}` : ''}
      meaningText="assessed the impact of this failed instrument check on the results listed"
      printedName={me.fullName}
      needsUsername={!me.signedOnce}
      confirmLabel="Sign decision"
      busy={decide.isPending}
      error={decide.error}
      reason={{
        label: 'Rationale',
        hint: 'Why the results stand, or why these containers are retested (at least 20 characters).',
        minLength: 20,
        tooShort: 'Write a rationale of at least 20 characters.',
      }}
      onCancel={onClose}
      onSign={(signature, rationale) =>
        a &&
        decide.mutate(
          { id: a.id, decision, retestContainerIds: decision === 'retest' ? picked : [], rationale, signature },
          { onSuccess: onClose },
        )
      }
    >
      <Field id="impact-decision" label="Decision">
        <Select
          id="impact-decision"
          value={decision}
          onChange={(e) => setDecision(e.target.value as 'none' | 'retest')}
        >
          <option value="retest">Retest the containers named below</option>
          <option value="none">No impact: the results stand</option>
        </Select>
      </Field>
      {decision === 'retest' && (
        <fieldset className="flex flex-col gap-1 text-sm">
          <legend className="font-medium">Containers to retest</legend>
          {containers.map(([id, label]) => (
            <label key={id} className="flex items-center gap-2">
              <input
                type="checkbox"
                checked={picked.includes(id)}
                onChange={(e) => setPicked(e.target.checked ? [...picked, id] : picked.filter((x) => x !== id))}
              />
              {label}
            </label>
          ))}
        </fieldset>
      )}
    </ReasonSignatureDialog>
  );
}

/** The assessments of one instrument (or all when instrumentId is left out). */
export function ImpactAssessments({ instrumentId, isQa, me }: { instrumentId?: number; isQa: boolean; me: Me }) {
  const q = useImpactAssessments();
  const [deciding, setDeciding] = useState<ImpactAssessment | null>(null);
  const list = (q.data ?? []).filter((a) => instrumentId === undefined || a.instrumentId === instrumentId);
  if (!list.length) return null;
  return (
    <section aria-labelledby="impact-h" className="mb-6">
      <h2 id="impact-h" className="mb-2 text-lg">
        Look-back of failed checks
      </h2>
      <ol className="flex flex-col gap-2">
        {list.map((a) => (
          <li
            key={a.id}
            className={`rounded-md border bg-white p-3 text-sm ${a.status === 'open' ? 'border-amber/60' : 'border-line'}`}
            data-testid="impact-assessment"
          >
            <p className="font-medium">
              {CHECK_TYPE_LABELS[a.checkType]} check failed <DateTime value={a.windowTo} seconds /> ·{' '}
              {a.status === 'open'
                ? 'awaiting QA assessment'
                : `assessed: ${a.decision === 'none' ? 'no impact' : 'retest'}`}
            </p>
            <p className="text-muted">
              {a.measurements.length} measurement{a.measurements.length === 1 ? '' : 's'} since{' '}
              {a.windowFrom ? <DateTime value={a.windowFrom} seconds /> : 'the first use (no earlier passing check)'},
              by the acquisition time the file states, else the upload time.
            </p>
            {a.measurements.length > 0 && (
              <ul className="mt-1 tabular-nums">
                {a.measurements.map((m) => (
                  <li key={m.measurementId}>
                    <Link to={`/lots/${m.lotId}`} className="text-petrol underline underline-offset-2">
                      {m.containerLabel}
                    </Link>{' '}
                    · {m.verdict} · <DateTime value={m.measuredAt} seconds />
                  </li>
                ))}
              </ul>
            )}
            {a.rationale && <p className="mt-1">“{a.rationale}”</p>}
            {a.signature && (
              <p className="mt-1 text-xs text-muted">
                Signed by {a.signature.printedName}, <DateTime value={a.signature.signedAt} seconds />
              </p>
            )}
            {isQa && a.status === 'open' && (
              <Button className="mt-2" onClick={() => setDeciding(a)}>
                Assess impact
              </Button>
            )}
          </li>
        ))}
      </ol>
      {isQa && <DecisionDialog a={deciding} me={me} onClose={() => setDeciding(null)} />}
    </section>
  );
}

/** Notices of failed instrument checks beside a lot and its certificates (the certificates stay unchanged). */
export function LotImpactNotices({ lotId, certificateId }: { lotId: number; certificateId?: number }) {
  const q = useLotNotices(lotId);
  const notices = (q.data ?? []).filter((n) => certificateId === undefined || n.certificateId === certificateId);
  if (!notices.length) return null;
  return (
    <section aria-label="Instrument check notices" className="mb-4 flex flex-col gap-1" data-testid="impact-notices">
      {notices.map((n) => (
        <p key={n.id} role="note" className="rounded-md border border-amber/60 bg-amber-soft px-3 py-2 text-sm">
          {n.notice}{' '}
          <span className="text-muted">
            {n.assessmentStatus === 'open'
              ? 'QA has not yet assessed the impact.'
              : `QA decided: ${n.decision === 'none' ? 'no impact' : 'retest of named containers'}.`}
          </span>
        </p>
      ))}
    </section>
  );
}
