/**
 * Electronic signature (21 CFR 11.50 / 11.200): shows what is signed and what the signature
 * means, the signer's printed name, asks the password again - and the user name as well at the
 * first signing of a session (needsUsername = !session.user.signedOnce). Enter submits.
 * The dialog only collects credentials: onSign sends them with the action; a refusal from the
 * server comes back through `error`. Send `signatureStatement(meaningText)` as the statement
 * if the API stores one, so the record holds the exact words the signer saw.
 */
import { useEffect, useId, useRef, useState, type FormEvent, type ReactNode } from 'react';
import type { SignatureInput } from '../../server/lib/contract';
import { Button } from './Button';
import { ErrorNote } from './ErrorNote';
import { Field, Input } from './Field';

/** The signature part of a request body, as the server's contract declares it. */
export type SignatureCredentials = SignatureInput;

export interface SignatureDialogProps {
  open: boolean;
  /** heading, e.g. "Sign test as performed" */
  title: string;
  /** what the signature means, completing "By signing I confirm that I ...", e.g. "performed this identity test as recorded" */
  meaningText: string;
  /** the record being signed, in words: "Lot L-2026-014 (Lactose monohydrate), 12 containers" */
  record?: ReactNode;
  /** the signer's printed name (shown, and recorded by the server) */
  printedName: string;
  /** first signing of the session: ask the user name too */
  needsUsername: boolean;
  /** button text that says what happens: "Sign as performed" */
  confirmLabel: string;
  onSign: (credentials: SignatureCredentials) => void;
  onCancel: () => void;
  busy?: boolean;
  /** the server's refusal or error (ApiError or sentence) */
  error?: unknown;
  /** extra content above the credentials (e.g. a reason field the action needs) */
  children?: ReactNode;
}

export function signatureStatement(meaningText: string): string {
  // A meaning that is itself a confirmation reads "By signing I confirm ...", never "I confirm that I confirm".
  const what = /^confirm\b/i.test(meaningText)
    ? `By signing I ${meaningText}`
    : `By signing I confirm that I ${meaningText}`;
  return `${what}. This electronic signature is the legally binding equivalent of my handwritten signature (21 CFR Part 11).`;
}

export function SignatureDialog({
  open,
  title,
  meaningText,
  record,
  printedName,
  needsUsername,
  confirmLabel,
  onSign,
  onCancel,
  busy,
  error,
  children,
}: SignatureDialogProps) {
  const ref = useRef<HTMLDialogElement>(null);
  const ids = useId();
  const [username, setUsername] = useState('');
  const [password, setPassword] = useState('');
  const [missing, setMissing] = useState<string | null>(null);

  useEffect(() => {
    const d = ref.current;
    if (!d) return;
    if (open && !d.open) {
      setPassword('');
      setMissing(null);
      d.showModal();
    } else if (!open && d.open) d.close();
  }, [open]);

  // a refused password is cleared so the signer types it again
  useEffect(() => {
    if (error) setPassword('');
  }, [error]);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    if (busy) return;
    if (needsUsername && !username.trim())
      return setMissing('Enter your user name: the first signature of a session needs both user name and password.');
    if (!password) return setMissing('Enter your password to sign.');
    setMissing(null);
    onSign(needsUsername ? { username: username.trim(), password } : { password });
  };

  return (
    <dialog
      ref={ref}
      aria-labelledby={`${ids}-title`}
      aria-describedby={`${ids}-statement`}
      onCancel={(e) => {
        e.preventDefault();
        if (!busy) onCancel();
      }}
      className="m-auto w-[min(34rem,calc(100vw-2rem))] rounded-lg border border-line bg-white p-0 text-ink shadow-xl backdrop:bg-ink/40"
    >
      {open && (
        <form onSubmit={submit} className="flex flex-col gap-4 p-6">
          <div>
            <h2 id={`${ids}-title`} className="text-xl">
              {title}
            </h2>
            {record && <div className="mt-1 text-sm text-muted">{record}</div>}
          </div>
          <p id={`${ids}-statement`} className="rounded-md border border-petrol/30 bg-petrol-soft px-3 py-2 text-sm">
            {signatureStatement(meaningText)}
          </p>
          <dl className="grid grid-cols-[auto_1fr] gap-x-3 text-sm">
            <dt className="text-muted">Signer</dt>
            <dd className="font-medium" data-testid="signer-name">
              {printedName}
            </dd>
          </dl>
          {children}
          {needsUsername && (
            <Field
              id={`${ids}-user`}
              label="User name"
              hint="The first signature of a session asks for both user name and password."
            >
              <Input
                id={`${ids}-user`}
                bench
                autoComplete="username"
                autoCapitalize="none"
                spellCheck={false}
                autoFocus
                value={username}
                onChange={(e) => setUsername(e.target.value)}
              />
            </Field>
          )}
          <Field id={`${ids}-pw`} label="Password">
            <Input
              id={`${ids}-pw`}
              bench
              type="password"
              autoComplete="current-password"
              autoFocus={!needsUsername}
              value={password}
              onChange={(e) => setPassword(e.target.value)}
            />
          </Field>
          {missing && <ErrorNote error={missing} />}
          {!missing && !!error && <ErrorNote error={error} />}
          <div className="flex flex-wrap justify-end gap-2">
            <Button size="bench" onClick={onCancel} disabled={busy}>
              Cancel
            </Button>
            <Button type="submit" size="bench" variant="primary" busy={busy}>
              {confirmLabel}
            </Button>
          </div>
        </form>
      )}
    </dialog>
  );
}
