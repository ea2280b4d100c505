/**
 * QA's decision after phase I: invalidate the result for an assignable laboratory cause (one of
 * the points where phase I found an error) and authorise a re-sample and retest of named
 * failing containers, or confirm the failure and reject the lot. Both are signed.
 */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { Field, Select, Textarea } from '../../../components/Field';
import { useDraft } from '../../../lib/session-sync';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { PHASE1_ITEMS, PHASE1_LABELS, type Phase1Item } from '../../../../server/modules/investigations/contract';
import { useConfirm, useInvalidate, type InvestigationDetail } from '../api';
import { Panel } from '../../../components/Panel';

export function DecisionForms({
  inv,
  me,
}: {
  inv: InvestigationDetail;
  me: { fullName: string; signedOnce: boolean };
}) {
  const invalidate = useInvalidate(inv.id);
  const confirm = useConfirm(inv.id);
  const causes = PHASE1_ITEMS.filter((k) => inv.phase1 && !inv.phase1.items[k].ok);
  const [mode, setMode] = useState<'invalidate' | 'confirm' | null>(null);
  const [cause, setCause] = useState<Phase1Item | ''>(causes[0] ?? '');
  // kept as this user's local draft until it is signed or the user signs out
  const [just, setJust, clearJust] = useDraft(`investigation.${inv.id}.justification`);
  const [retest, setRetest] = useState<number[]>(inv.failing.map((f) => f.containerId));
  const [error, setError] = useState<string | null>(null);
  const [signing, setSigning] = useState(false);

  const ready = () => {
    if (just.trim().length < 20) return (setError('Write a justification of at least 20 characters.'), false);
    if (mode === 'invalidate' && !cause)
      return (setError('Choose the assignable laboratory cause found in phase I.'), false);
    if (mode === 'invalidate' && retest.length === 0)
      return (setError('Name at least one container to re-sample and retest.'), false);
    setError(null);
    return true;
  };

  return (
    <Panel id="decide" title="Decision" className="flex flex-col gap-4 p-4" titleClassName="text-lg">
      <div className="flex flex-wrap gap-2">
        <Button
          size="bench"
          variant={mode === 'invalidate' ? 'primary' : 'secondary'}
          disabled={causes.length === 0}
          onClick={() => setMode('invalidate')}
        >
          Invalidate and authorise a retest
        </Button>
        <Button size="bench" variant={mode === 'confirm' ? 'danger' : 'secondary'} onClick={() => setMode('confirm')}>
          Confirm the failure and reject the lot
        </Button>
      </div>
      {causes.length === 0 && (
        <p className="text-sm text-muted">
          Phase I found no laboratory error, so the result cannot be invalidated: a result is invalidated only for an
          assignable laboratory cause.
        </p>
      )}
      {mode === 'invalidate' && (
        <div className="flex flex-col gap-3">
          <Field id="cause" label="Assignable laboratory cause (from phase I)">
            <Select id="cause" value={cause} onChange={(e) => setCause(e.target.value as Phase1Item)}>
              {causes.map((k) => (
                <option key={k} value={k}>
                  {PHASE1_LABELS[k].title}: {inv.phase1?.items[k].note}
                </option>
              ))}
            </Select>
          </Field>
          <fieldset className="flex flex-col gap-1">
            <legend className="text-sm font-medium">Containers to re-sample and retest</legend>
            {inv.failing.map((f) => (
              <label key={f.containerId} className="inline-flex min-h-11 items-center gap-2 text-sm">
                <input
                  type="checkbox"
                  checked={retest.includes(f.containerId)}
                  onChange={(e) =>
                    setRetest(e.target.checked ? [...retest, f.containerId] : retest.filter((x) => x !== f.containerId))
                  }
                />
                {f.label}
              </label>
            ))}
          </fieldset>
        </div>
      )}
      {mode && (
        <>
          <Field id="just" label="Written justification" error={error ?? undefined}>
            <Textarea id="just" value={just} onChange={(e) => setJust(e.target.value)} />
          </Field>
          <div>
            <Button
              size="bench"
              variant={mode === 'confirm' ? 'danger' : 'primary'}
              onClick={() => ready() && setSigning(true)}
            >
              {mode === 'confirm' ? 'Sign: reject the lot' : 'Sign: invalidate and authorise retest'}
            </Button>
          </div>
        </>
      )}
      <SignatureDialog
        open={signing}
        title={
          mode === 'confirm' ? 'Confirm the failure and reject the lot' : 'Invalidate the result and authorise a retest'
        }
        meaningText={
          mode === 'confirm'
            ? `reject lot ${inv.lotNumber} because its identity failure is confirmed by this investigation`
            : `invalidate the failing result of lot ${inv.lotNumber} for the assignable laboratory cause given and authorise a re-sample and retest of the named containers`
        }
        record={`Investigation ${inv.number}, lot ${inv.lotNumber}`}
        printedName={me.fullName}
        needsUsername={!me.signedOnce}
        confirmLabel={mode === 'confirm' ? 'Reject the lot' : 'Authorise the retest'}
        busy={invalidate.isPending || confirm.isPending}
        error={mode === 'confirm' ? confirm.error : invalidate.error}
        onCancel={() => {
          setSigning(false);
          invalidate.reset();
          confirm.reset();
        }}
        onSign={(signature) => {
          const close = {
            onSuccess: () => {
              setSigning(false);
              clearJust();
            },
          };
          if (mode === 'confirm') confirm.mutate({ justification: just.trim(), signature }, close);
          else if (cause)
            invalidate.mutate({ cause, justification: just.trim(), retestContainerIds: retest, signature }, close);
        }}
      />
    </Panel>
  );
}
