/**
 * What a change to master data shares (a new material profile version, a new source status): the
 * fields in a grid, the button that opens the signature and Cancel, and QA's e-signature with the
 * reason for the change; the form closes once the change is stored.
 */
import { useState, type ReactNode } from 'react';
import { Button } from '../../../components/Button';
import type { SignatureCredentials } from '../../../components/SignatureDialog';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { mutationSigning, type Signer } from '../../../lib/signing';

export type Me = Signer;

export function SignedChangeForm({
  testId,
  me,
  onDone,
  openLabel,
  canOpen = () => true,
  title,
  meaningText,
  confirmLabel,
  mutation,
  send,
  children,
}: {
  testId: string;
  me: Me;
  onDone: () => void;
  /** the button that opens the signature, e.g. "Sign status change…" */
  openLabel: string;
  /** checks the fields before the signature opens (false keeps it closed) */
  canOpen?: () => boolean;
  title: string;
  meaningText: string;
  confirmLabel: string;
  mutation: { isPending: boolean; error: unknown; reset: () => void };
  /** sends the change; `stored` is called once it is stored */
  send: (signature: SignatureCredentials, reason: string, stored: () => void) => void;
  children: ReactNode;
}) {
  const [signing, setSigning] = useState(false);
  return (
    <div className="grid gap-2 rounded-md border border-line p-3 md:grid-cols-3" data-testid={testId}>
      {children}
      <div className="flex gap-2 md:col-span-3">
        <Button size="desk" variant="primary" onClick={() => canOpen() && setSigning(true)}>
          {openLabel}
        </Button>
        <Button size="desk" variant="quiet" onClick={onDone}>
          Cancel
        </Button>
      </div>
      <ReasonSignatureDialog
        open={signing}
        title={title}
        meaningText={meaningText}
        confirmLabel={confirmLabel}
        reason={{ label: 'Reason', minLength: 3, tooShort: 'Give the reason for the change.' }}
        {...mutationSigning(me, mutation, () => setSigning(false))}
        onSign={(signature, reason) =>
          send(signature, reason, () => {
            setSigning(false);
            onDone();
          })
        }
      />
    </div>
  );
}
