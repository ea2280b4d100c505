/** QA's sign-off of an integrity alert: what was done about it, signed with the password (21 CFR 11.50). */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { Field, Textarea } from '../../../components/Field';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { useSignOff, type IntegrityAlert } from '../api';
import { mutationSigning } from '../../../lib/signing';
import { Panel } from '../../../components/Panel';

export function SignOffPanel({ alert, me }: { alert: IntegrityAlert; me: { fullName: string; signedOnce: boolean } }) {
  const signOff = useSignOff(alert.id);
  const [comment, setComment] = useState('');
  const [error, setError] = useState<string | null>(null);
  const [signing, setSigning] = useState(false);
  return (
    <Panel id="sign-off" title="Sign the alert off" className="flex flex-col gap-3 p-4" titleClassName="text-lg">
      <Field
        id="signoff-comment"
        label="What was done about it"
        hint="E.g. the deviation or investigation opened, the records re-measured. Kept with the alert and in the audit trail."
        error={error ?? undefined}
      >
        <Textarea id="signoff-comment" value={comment} onChange={(e) => setComment(e.target.value)} />
      </Field>
      <div>
        <Button
          variant="primary"
          onClick={() => {
            if (comment.trim().length < 10)
              return setError('Say what was done about the alert (at least 10 characters).');
            setError(null);
            setSigning(true);
          }}
        >
          Sign off
        </Button>
      </div>
      <SignatureDialog
        open={signing}
        title={`Sign off integrity alert ${alert.id}`}
        meaningText="reviewed this integrity alert and recorded what was done about it"
        record={alert.summary}
        confirmLabel="Sign off"
        {...mutationSigning(me, signOff, () => setSigning(false))}
        onSign={(signature) =>
          signOff.mutate({ comment: comment.trim(), signature }, { onSuccess: () => setSigning(false) })
        }
      />
    </Panel>
  );
}
