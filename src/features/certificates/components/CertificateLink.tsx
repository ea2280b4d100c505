/**
 * For the lot page: the lot's current identity certificate with its download, and any earlier
 * certificates it superseded. Renders a short note when the lot has none.
 *   <CertificateLink lotId={lot.id} />
 */
import { Link } from 'react-router-dom';
import { DateTime } from '../../../components/DateTime';
import { certificatePdfUrl, useLotCertificates } from '../api';
import { CertificateState } from './CertificateState';

export function CertificateLink({
  lotId,
  emptyText = 'No identity certificate has been issued for this lot.',
}: {
  lotId: number;
  emptyText?: string;
}) {
  const q = useLotCertificates(lotId);
  if (q.isPending) return <p className="text-sm text-muted">Loading certificates…</p>;
  if (q.isError) return <p className="text-sm text-fail">The certificates could not be loaded.</p>;
  const items = q.data.items;
  if (items.length === 0) return <p className="text-sm text-muted">{emptyText}</p>;
  return (
    <ul className="flex flex-col gap-2" aria-label="Identity certificates of this lot" data-testid="lot-certificates">
      {items.map((c) => (
        <li key={c.id} className={`flex flex-wrap items-center gap-3 ${c.current ? '' : 'text-muted'}`}>
          <Link to={`/certificates/${c.id}`} className="font-medium text-petrol underline-offset-2 hover:underline">
            {c.number}
          </Link>
          <CertificateState certificate={c} />
          <span className="text-sm">
            issued <DateTime value={c.issuedAt} />
          </span>
          <a
            href={certificatePdfUrl(c.id)}
            download={`${c.number}.pdf`}
            className="inline-flex min-h-11 items-center rounded-md border border-petrol bg-petrol px-4 text-base font-medium text-white hover:bg-petrol-dark"
          >
            Download certificate {c.number}
          </a>
          <Link
            to={`/certificates/verify?number=${encodeURIComponent(c.number)}`}
            className="text-sm text-petrol underline-offset-2 hover:underline"
          >
            Verify
          </Link>
        </li>
      ))}
    </ul>
  );
}
