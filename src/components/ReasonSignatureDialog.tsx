/**
 * An e-signature that carries a written reason (a return, a retirement, a superseding
 * certificate, a justification that overrides a gate): the signature dialog with one text field
 * checked for its least length before anything is sent. The reason is cleared each time the
 * dialog opens; a sentence says what is missing. Extra content (a table, a file field) goes above
 * the reason.
 */
import { useEffect, useId, useState, type ReactNode } from 'react';
import { Field, Textarea } from './Field';
import { SignatureDialog, type SignatureCredentials, type SignatureDialogProps } from './SignatureDialog';

export interface ReasonField {
  label: string;
  hint?: string;
  /** the fewest characters, after trimming; 0 makes the field optional */
  minLength: number;
  /** the sentence shown when the reason is shorter, e.g. "Give a reason (at least 3 characters)." */
  tooShort: string;
}

export interface ReasonSignatureDialogProps extends Omit<SignatureDialogProps, 'onSign' | 'children'> {
  /** the reason the action needs; leave out when, for now, it needs none (the field is hidden) */
  reason?: ReasonField;
  /** called with the credentials and the trimmed reason once the reason is long enough */
  onSign: (credentials: SignatureCredentials, reason: string) => void;
  children?: ReactNode;
}

export function ReasonSignatureDialog({ reason, onSign, error, children, ...dialog }: ReasonSignatureDialogProps) {
  const id = useId();
  const [text, setText] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  useEffect(() => {
    if (dialog.open) {
      setText('');
      setProblem(null);
    }
  }, [dialog.open]);
  return (
    <SignatureDialog
      {...dialog}
      error={problem ?? error}
      onSign={(credentials) => {
        const written = text.trim();
        if (reason && written.length < reason.minLength) return setProblem(reason.tooShort);
        setProblem(null);
        onSign(credentials, reason ? written : '');
      }}
    >
      {children}
      {reason && (
        <Field id={`${id}-reason`} label={reason.label} hint={reason.hint}>
          <Textarea id={`${id}-reason`} value={text} onChange={(e) => setText(e.target.value)} />
        </Field>
      )}
    </SignatureDialog>
  );
}
