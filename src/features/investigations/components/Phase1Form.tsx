/** QA's phase I laboratory check: four structured points (no error found / error found, with what was checked) and a summary, signed. */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { useDraft } from '../../../lib/session-sync';
import { Field, Textarea } from '../../../components/Field';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { PHASE1_ITEMS, PHASE1_LABELS, type Phase1Item } from '../../../../server/modules/investigations/contract';
import { usePhase1, type InvestigationDetail } from '../api';
import { mutationSigning } from '../../../lib/signing';
import { Panel } from '../../../components/Panel';

export function Phase1Form({ inv, me }: { inv: InvestigationDetail; me: { fullName: string; signedOnce: boolean } }) {
  const save = usePhase1(inv.id);
  const [items, setItems] = useState<Record<Phase1Item, { ok: boolean | null; note: string }>>(
    () =>
      Object.fromEntries(PHASE1_ITEMS.map((k) => [k, { ok: null, note: '' }])) as Record<
        Phase1Item,
        { ok: boolean | null; note: string }
      >,
  );
  // A long note survives a reload or an idle sign-out as this user's local draft (cleared at sign-out).
  const [summary, setSummary, clearSummary] = useDraft(`investigation.${inv.id}.phase1-summary`);
  const [errors, setErrors] = useState<Record<string, string>>({});
  const [signing, setSigning] = useState(false);

  const check = () => {
    const e: Record<string, string> = {};
    for (const k of PHASE1_ITEMS) {
      if (items[k].ok === null) e[k] = 'Say whether a laboratory error was found.';
      else if (items[k].note.trim().length < 3) e[k] = 'Write what was checked (at least 3 characters).';
    }
    if (summary.trim().length < 10) e.summary = 'Summarise the laboratory check (at least 10 characters).';
    setErrors(e);
    return Object.keys(e).length === 0;
  };

  return (
    <Panel id="p1" title="Phase I laboratory check" className="flex flex-col gap-4 p-4" titleClassName="text-lg">
      {PHASE1_ITEMS.map((k) => (
        <fieldset key={k} className="flex flex-col gap-2 border-b border-line/60 pb-3" aria-describedby={`${k}-q`}>
          <legend className="font-medium">{PHASE1_LABELS[k].title}</legend>
          <p id={`${k}-q`} className="text-sm text-muted">
            {PHASE1_LABELS[k].question}
          </p>
          <div className="flex flex-wrap gap-4">
            <label className="inline-flex min-h-11 items-center gap-2">
              <input
                type="radio"
                name={`p1-${k}`}
                checked={items[k].ok === true}
                onChange={() => setItems({ ...items, [k]: { ...items[k], ok: true } })}
              />{' '}
              No laboratory error found
            </label>
            <label className="inline-flex min-h-11 items-center gap-2">
              <input
                type="radio"
                name={`p1-${k}`}
                checked={items[k].ok === false}
                onChange={() => setItems({ ...items, [k]: { ...items[k], ok: false } })}
              />{' '}
              Laboratory error found
            </label>
          </div>
          <Field id={`p1-${k}-note`} label="What was checked and found" error={errors[k]}>
            <Textarea
              id={`p1-${k}-note`}
              value={items[k].note}
              onChange={(e) => setItems({ ...items, [k]: { ...items[k], note: e.target.value } })}
            />
          </Field>
        </fieldset>
      ))}
      <Field id="p1-summary" label="Summary" error={errors.summary}>
        <Textarea id="p1-summary" value={summary} onChange={(e) => setSummary(e.target.value)} />
      </Field>
      <div>
        <Button variant="primary" size="bench" onClick={() => check() && setSigning(true)}>
          Sign the phase I record
        </Button>
      </div>
      <SignatureDialog
        open={signing}
        title="Sign the phase I laboratory check"
        meaningText={`carried out the phase I laboratory check of investigation ${inv.number} as recorded`}
        record={`Investigation ${inv.number}, lot ${inv.lotNumber}`}
        confirmLabel="Sign the phase I record"
        {...mutationSigning(me, save, () => setSigning(false))}
        onSign={(signature) =>
          save.mutate(
            {
              ...(Object.fromEntries(
                PHASE1_ITEMS.map((k) => [k, { ok: items[k].ok === true, note: items[k].note.trim() }]),
              ) as Record<Phase1Item, { ok: boolean; note: string }>),
              summary: summary.trim(),
              signature,
            },
            {
              onSuccess: () => {
                setSigning(false);
                clearSummary();
              },
            },
          )
        }
      />
    </Panel>
  );
}
