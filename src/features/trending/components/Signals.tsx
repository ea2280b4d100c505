/**
 * Trend signals: the list (work queue and trending page), QA's acknowledgement with a comment, and
 * opening an investigation of the signal (signed).
 */
import { useState } from 'react';
import { Link, useNavigate } from 'react-router-dom';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Textarea } from '../../../components/Field';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { errorMessage } from '../../../lib/api';
import { METRIC_LABELS, useAcknowledge, useOpenInvestigation, useSignals, type TrendSignal } from '../api';
import { mutationSigning } from '../../../lib/signing';

const LINK = 'inline-flex min-h-11 items-center font-medium text-petrol underline underline-offset-2';

export function SignalRow({ s }: { s: TrendSignal }) {
  return (
    <li className="flex flex-wrap items-center gap-x-4 gap-y-1 px-3 py-2 text-sm" data-testid="trend-signal">
      <Link to={`/trending/signals/${s.id}`} className={LINK}>
        Signal {s.id}
      </Link>
      <span>
        {s.materialName} (method version {s.methodVersion})
      </span>
      <span>{s.scopeLabel}</span>
      <span>
        {METRIC_LABELS[s.metric].title}: {s.ruleText}
      </span>
      <span className="text-muted">
        raised <DateTime value={s.raisedAt} />
      </span>
      <span className={s.status === 'open' ? 'font-medium text-amber-ink' : 'text-muted'}>
        {s.status === 'open'
          ? '⚠ open: early warning'
          : s.status === 'investigated'
            ? `under investigation ${s.investigationNumber ?? ''}`
            : `acknowledged by ${s.acknowledgedBy?.name ?? ''}`}
      </span>
    </li>
  );
}

export function SignalsList({ status, empty }: { status: 'open' | 'all'; empty: string }) {
  const q = useSignals(status);
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  if (q.data.length === 0) return <p className="text-sm text-muted">{empty}</p>;
  return (
    <ul className="divide-y divide-line rounded-md border border-line bg-white">
      {q.data.map((s) => (
        <SignalRow key={s.id} s={s} />
      ))}
    </ul>
  );
}

export function AcknowledgePanel({ signal }: { signal: TrendSignal }) {
  const ack = useAcknowledge(signal.id);
  const [comment, setComment] = useState('');
  const [error, setError] = useState<string | null>(null);
  return (
    <section aria-labelledby="ack" className="flex flex-col gap-3 rounded-md border border-line bg-white p-4">
      <h2 id="ack" className="text-lg">
        Acknowledge the signal
      </h2>
      <Field
        id="ack-comment"
        label="What you found and what follows"
        hint="E.g. the supplier asked about a change, extra sampling of the next deliveries, an investigation opened. Kept with the signal and in the audit trail."
        error={error ?? (ack.error ? errorMessage(ack.error) : undefined)}
      >
        <Textarea id="ack-comment" value={comment} onChange={(e) => setComment(e.target.value)} />
      </Field>
      <div>
        <Button
          variant="primary"
          disabled={ack.isPending}
          onClick={() => {
            if (comment.trim().length < 10)
              return setError('Say what you found and what follows (at least 10 characters).');
            setError(null);
            ack.mutate({ comment: comment.trim() });
          }}
        >
          Acknowledge signal
        </Button>
      </div>
    </section>
  );
}

/** QA opens an investigation of an open signal: a reason and the e-signature; then its page. */
export function OpenInvestigationPanel({
  signal,
  me,
}: {
  signal: TrendSignal;
  me: { fullName: string; signedOnce: boolean };
}) {
  const open = useOpenInvestigation(signal.id);
  const navigate = useNavigate();
  const [signing, setSigning] = useState(false);
  return (
    <section aria-labelledby="inv" className="flex flex-col gap-3 rounded-md border border-line bg-white p-4">
      <h2 id="inv" className="text-lg">
        Investigate the signal
      </h2>
      <p className="text-sm text-muted">
        When the warning needs more than a comment: the investigation names this signal and the measurements of its
        pattern, QA records the phase I laboratory check and signs the conclusion. No result, lot or certificate
        changes.
      </p>
      <div>
        <Button onClick={() => setSigning(true)}>Open an investigation</Button>
      </div>
      <ReasonSignatureDialog
        open={signing}
        title="Open an investigation of this trend signal"
        meaningText="open an investigation of this trend signal and the measurements of its pattern"
        record={`Trend signal ${signal.id}: ${signal.materialName}, ${signal.scopeLabel}, ${signal.ruleText}`}
        confirmLabel="Open the investigation"
        reason={{
          label: 'Why the signal needs an investigation',
          minLength: 10,
          tooShort: 'Say why the signal needs an investigation (at least 10 characters).',
        }}
        {...mutationSigning(me, open, () => setSigning(false))}
        onSign={(signature, reason) =>
          open.mutate(
            { reason, signature },
            {
              onSuccess: (inv) => {
                setSigning(false);
                void navigate(`/investigations/${inv.id}`);
              },
            },
          )
        }
      />
    </section>
  );
}
