/** QA issues a new certificate that supersedes the current one: a reason and an e-signature; the old one stays readable. */
import { useEffect, useState } from 'react';
import { Field, Textarea } from '../../../components/Field';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { useSupersede, type CertificateMeta } from '../api';

export function SupersedeDialog({
  open,
  certificate,
  printedName,
  needsUsername,
  onClose,
  onDone,
}: {
  open: boolean;
  certificate: CertificateMeta;
  printedName: string;
  needsUsername: boolean;
  onClose: () => void;
  onDone: (c: CertificateMeta) => void;
}) {
  const supersede = useSupersede();
  const [reason, setReason] = useState('');
  const [problem, setProblem] = useState<string | null>(null);
  useEffect(() => {
    if (open) {
      setReason('');
      setProblem(null);
      supersede.reset();
    }
    // eslint-disable-next-line react-hooks/exhaustive-deps
  }, [open]);
  return (
    <SignatureDialog
      open={open}
      title={`Issue a new certificate replacing ${certificate.number}`}
      meaningText={`issue a new identity certificate for lot ${certificate.lotNumber} that supersedes ${certificate.number}; both stay on record`}
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel="Sign and issue new certificate"
      busy={supersede.isPending}
      error={problem ?? supersede.error}
      onCancel={onClose}
      onSign={(signature) => {
        if (reason.trim().length < 10)
          return setProblem('Give the reason for the new certificate (at least 10 characters).');
        setProblem(null);
        supersede.mutate({ id: certificate.id, reason: reason.trim(), signature }, { onSuccess: (c) => onDone(c) });
      }}
    >
      <Field id={`supersede-${certificate.id}`} label="Reason (printed on the new certificate)">
        <Textarea id={`supersede-${certificate.id}`} value={reason} onChange={(e) => setReason(e.target.value)} />
      </Field>
    </SignatureDialog>
  );
}
