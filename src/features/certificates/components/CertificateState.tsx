/** Current or superseded, in words and icon (never colour alone). */
import { ArrowIcon, TickIcon } from '../../../components/Icons';
import type { CertificateMeta } from '../api';

export function CertificateState({ certificate }: { certificate: Pick<CertificateMeta, 'current' | 'supersededBy'> }) {
  if (certificate.current)
    return (
      <span className="inline-flex items-center gap-1 text-sm text-pass" data-state="current">
        <TickIcon width={2.2} />
        Current
      </span>
    );
  return (
    <span className="inline-flex items-center gap-1 text-sm text-muted" data-state="superseded">
      <ArrowIcon />
      Superseded{certificate.supersededBy ? ` by ${certificate.supersededBy.number}` : ''}
    </span>
  );
}
