/** Identity certificates: search by lot, material, number and issue date; download; link to verification. */
import { useState } from 'react';
import { Link } from 'react-router-dom';
import { useHasRole } from '../app/session';
import { PageLoading } from '../app/lazy-page';
import { QueryState } from '../components/QueryState';
import { PageHeader } from '../components/PageHeader';
import { useCertificates, type CertificateFilter } from '../features/certificates/api';
import { CertificatesTable } from '../features/certificates/components/CertificatesTable';
import { CertificateSearchForm } from '../features/certificates/components/CertificateSearchForm';
import { SigningIdentityPanel } from '../features/certificates/components/SigningIdentityPanel';

export default function CertificatesPage() {
  const [filter, setFilter] = useState<CertificateFilter>({});
  const list = useCertificates(filter);
  const isAdmin = useHasRole('admin');
  return (
    <div className="max-w-7xl">
      <PageHeader
        title="Identity certificates"
        subtitle="Signed PDF certificates of lots whose every container passed identity testing and was verified. Each download is recorded."
        actions={
          <Link
            to="/certificates/verify"
            className="inline-flex min-h-9 items-center rounded-md border border-petrol bg-petrol px-3 text-sm font-medium text-white hover:bg-petrol-dark"
          >
            Verify a certificate
          </Link>
        }
      />
      {isAdmin && <SigningIdentityPanel />}
      <CertificateSearchForm initial={filter} onSearch={setFilter} />
      <QueryState query={list} loading={<PageLoading />}>
        {(data) => (
          <>
            <CertificatesTable certificates={data.items} />
            {data.total > data.items.length && (
              <p className="mt-2 text-sm text-muted">
                Showing the newest {data.items.length} of {data.total}; narrow the search to see older ones.
              </p>
            )}
          </>
        )}
      </QueryState>
    </div>
  );
}
