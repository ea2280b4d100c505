/**
 * QA disposition of a lot (desk screen): every release condition with whether it holds, the
 * release checks of the material profile (recorded with a signature), and QA's signed release or
 * rejection. The caution sentence stands beside the decision.
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input } from '../../../components/Field';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { Verdict } from '../../../components/Verdict';
import { useDecide, useDisposition, useRecordCheck } from '../api';
import { mutationSigning } from '../../../lib/signing';
import { Panel } from '../../../components/Panel';

interface Me {
  fullName: string;
  signedOnce: boolean;
}

export function DispositionPanel({
  lotId,
  me,
  canRecord,
  canDecide,
}: {
  lotId: number;
  me: Me;
  canRecord: boolean;
  canDecide: boolean;
}) {
  const q = useDisposition(lotId);
  const check = useRecordCheck(lotId);
  const decide = useDecide(lotId);
  const [pending, setPending] = useState<{ key: string; outcome: 'conforms' | 'does-not-conform' } | null>(null);
  const [reference, setReference] = useState('');
  const [dialog, setDialog] = useState<'release' | 'reject' | 'retest' | null>(null);
  if (q.isPending) return <p className="text-sm text-muted">Loading the disposition…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const d = q.data;
  const open = d.status === 'quarantine';
  return (
    <Panel id="disposition" title="Disposition" className="mt-6 p-4" titleClassName="mb-2 text-lg">
      {d.disposition && (
        <p className="mb-3 text-sm" data-testid="disposition-decision">
          {d.disposition.decision === 'released' ? 'Released' : 'Rejected'} by {d.disposition.decidedBy.name},{' '}
          <DateTime value={d.disposition.decidedAt} />
          {d.disposition.retestDate ? ` · retest by ${d.disposition.retestDate}` : ''}
          {d.disposition.reason ? ` · ${d.disposition.reason}` : ''}
        </p>
      )}
      {d.retests.length > 0 && (
        <ul className="mb-3 flex flex-col gap-1 text-sm" aria-label="Retests" data-testid="retests">
          {d.retests.map((r) => (
            <li key={r.id}>
              Retest started by {r.startedBy.name}, <DateTime value={r.startedAt} />
              {r.retestDateDue ? ` (retest date ${r.retestDateDue})` : ''} · {r.reason}
            </li>
          ))}
        </ul>
      )}
      <ul className="mb-3 flex flex-col gap-1 text-sm" aria-label="Release conditions">
        {d.conditions.map((c) => (
          <li key={c.key} className="flex flex-wrap items-center gap-2" data-testid={`condition-${c.key}`}>
            <Verdict verdict={c.met ? 'pass' : 'fail'} label={c.met ? 'Met' : 'Open'} size="sm" />
            <span className="font-medium">{c.label}</span>
            <span className="text-muted">{c.detail}</span>
          </li>
        ))}
      </ul>
      {d.requiredChecks.length > 0 && (
        <table className="mb-3 w-full text-sm">
          <caption className="text-left font-medium">Release checks of the material</caption>
          <thead>
            <tr className="text-left text-muted">
              <th data-key-column="check" className="py-1">
                Check
              </th>
              <th data-key-column="recorded">Recorded</th>
              <th>Reference</th>
              {canRecord && open && <th>Record</th>}
            </tr>
          </thead>
          <tbody>
            {d.requiredChecks.map((r) => (
              <tr key={r.key} className="border-t border-line">
                <td className="py-1">{r.label}</td>
                <td>
                  {r.record
                    ? `${r.record.outcome === 'conforms' ? 'Conforms' : 'Does not conform'} · ${r.record.recordedBy.name}`
                    : '—'}
                </td>
                <td>{r.record?.reference ?? ''}</td>
                {canRecord && open && (
                  <td className="flex gap-2 py-1">
                    <Button size="desk" onClick={() => setPending({ key: r.key, outcome: 'conforms' })}>
                      Conforms
                    </Button>
                    <Button size="desk" onClick={() => setPending({ key: r.key, outcome: 'does-not-conform' })}>
                      Does not conform
                    </Button>
                  </td>
                )}
              </tr>
            ))}
          </tbody>
        </table>
      )}
      <p className="mb-3 text-sm text-amber-ink">{d.caution}</p>
      {canDecide && open && (
        <div className="flex flex-wrap gap-2">
          <Button size="bench" variant="primary" disabled={!d.releasable} onClick={() => setDialog('release')}>
            Release lot
          </Button>
          <Button size="bench" onClick={() => setDialog('reject')}>
            Reject lot
          </Button>
        </div>
      )}
      {canDecide && d.status === 'released' && (
        <Button size="bench" onClick={() => setDialog('retest')}>
          Start retest
        </Button>
      )}
      <ReasonSignatureDialog
        open={pending !== null}
        title="Sign the release check"
        meaningText={`recorded this check of the lot as ${pending?.outcome === 'conforms' ? 'conforming' : 'not conforming'}`}
        record={d.requiredChecks.find((r) => r.key === pending?.key)?.label}
        confirmLabel="Sign check"
        {...mutationSigning(me, check, () => setPending(null))}
        onSign={(signature) =>
          check.mutate(
            { checkKey: pending!.key, outcome: pending!.outcome, reference: reference.trim() || null, signature },
            { onSuccess: () => setPending(null) },
          )
        }
      >
        <Field id="chk-ref" label="Reference (CoA number, report; needed for tests done elsewhere)">
          <Input id="chk-ref" value={reference} onChange={(e) => setReference(e.target.value)} />
        </Field>
      </ReasonSignatureDialog>
      <ReasonSignatureDialog
        open={dialog !== null}
        title={dialog === 'release' ? 'Release the lot' : dialog === 'retest' ? 'Start the retest' : 'Reject the lot'}
        meaningText={
          dialog === 'release'
            ? `release lot ${d.lotNumber}: every condition above is met`
            : dialog === 'retest'
              ? `put lot ${d.lotNumber} back into quarantine for a new identity test under the current method`
              : `reject lot ${d.lotNumber} for the reason given`
        }
        confirmLabel={
          dialog === 'release' ? 'Sign as released' : dialog === 'retest' ? 'Sign retest start' : 'Sign rejection'
        }
        reason={
          dialog === 'reject' || dialog === 'retest'
            ? {
                label: 'Reason',
                minLength: 10,
                tooShort: `Give the reason for the ${dialog === 'retest' ? 'retest' : 'rejection'} (at least 10 characters).`,
              }
            : { label: 'Comment (optional)', minLength: 0, tooShort: '' }
        }
        {...mutationSigning(me, decide, () => setDialog(null))}
        onSign={(signature, text) =>
          decide.mutate({ decision: dialog!, text, signature }, { onSuccess: () => setDialog(null) })
        }
      />
    </Panel>
  );
}
