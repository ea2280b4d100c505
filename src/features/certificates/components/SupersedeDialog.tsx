/** QA issues a new certificate that supersedes the current one: a reason and an e-signature; the old one stays readable. */
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
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
  return (
    <ReasonSignatureDialog
      open={open}
      title={`Issue a new certificate replacing ${certificate.number}`}
      meaningText={`issue a new identity certificate for lot ${certificate.lotNumber} that supersedes ${certificate.number}; both stay on record`}
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel="Sign and issue new certificate"
      busy={supersede.isPending}
      error={supersede.error}
      onCancel={() => {
        supersede.reset();
        onClose();
      }}
      reason={{
        label: 'Reason (printed on the new certificate)',
        minLength: 10,
        tooShort: 'Give the reason for the new certificate (at least 10 characters).',
      }}
      onSign={(signature, reason) =>
        supersede.mutate({ id: certificate.id, reason, signature }, { onSuccess: (c) => onDone(c) })
      }
    />
  );
}
