/** One identity certificate: what it states, who signed, download, verification; QA may supersede it. */
import { useState } from 'react';
import { Link, useNavigate, useParams } from 'react-router-dom';
import { useHasRole, useSession } from '../app/session';
import { PageLoading } from '../app/lazy-page';
import { Button } from '../components/Button';
import { DateTime } from '../components/DateTime';
import { ErrorNote } from '../components/ErrorNote';
import { Hash } from '../components/Hash';
import { ScrollRegion } from '../components/ScrollRegion';
import { RecordAlerts } from '../components/RecordAlerts';
import { LotImpactNotices } from '../features/instruments/components/ImpactAssessments';
import { PageHeader } from '../components/PageHeader';
import { RecordHistory } from '../features/audit/components/RecordHistory';
import { Verdict } from '../components/Verdict';
import { formatScore } from '../lib/format';
import { meaningLabel } from '../lib/signature-meanings';
import { certificatePdfUrl, useCertificate } from '../features/certificates/api';
import { CertificateState } from '../features/certificates/components/CertificateState';
import { SupersedeDialog } from '../features/certificates/components/SupersedeDialog';

export default function CertificatePage() {
  const canSeeTrail = useHasRole('auditor', 'qa_manager', 'admin');
  const id = Number(useParams().id);
  const q = useCertificate(id);
  const me = useSession();
  const isQa = useHasRole('qa_manager');
  const [superseding, setSuperseding] = useState(false);
  const navigate = useNavigate();
  if (q.isPending) return <PageLoading />;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const c = q.data;
  const content = c.content;
  return (
    <div className="max-w-7xl">
      <PageHeader
        eyebrow={
          <Link to="/certificates" className="text-petrol hover:underline">
            Identity certificates
          </Link>
        }
        title={`Identity certificate ${c.number}`}
        subtitle={
          <span className="inline-flex flex-wrap items-center gap-2">
            Lot{' '}
            <Link to={`/lots/${c.lotId}`} className="text-petrol hover:underline">
              {c.lotNumber}
            </Link>{' '}
            · {c.materialName} ({c.materialCode}) · issued <DateTime value={c.issuedAt} />
            <CertificateState certificate={c} />
          </span>
        }
        actions={
          <>
            <RecordHistory
              entityType="certificate"
              entityId={c.id}
              label={`certificate ${c.number}`}
              showTrailLink={canSeeTrail}
            />
            <a
              href={certificatePdfUrl(c.id)}
              download={`${c.number}.pdf`}
              className="inline-flex min-h-9 items-center rounded-md border border-petrol bg-petrol px-3 text-sm font-medium text-white hover:bg-petrol-dark"
            >
              Download PDF
            </a>
            <Link
              to={`/certificates/verify?number=${encodeURIComponent(c.number)}`}
              className="inline-flex min-h-9 items-center rounded-md border border-line bg-white px-3 text-sm hover:border-petrol hover:text-petrol"
            >
              Verify
            </Link>
            {isQa && c.current && <Button onClick={() => setSuperseding(true)}>Issue replacement</Button>}
          </>
        }
      />
      <RecordAlerts type="certificate" id={c.id} label={`Certificate ${c.number}`} />
      <LotImpactNotices lotId={c.lotId} certificateId={c.id} />
      {c.supersedes && (
        <p className="mb-3 text-sm">
          Supersedes{' '}
          <Link to={`/certificates/${c.supersedes.id}`} className="text-petrol hover:underline">
            {c.supersedes.number}
          </Link>
          {c.supersedeReason ? `: ${c.supersedeReason}` : ''}
        </p>
      )}
      {c.supersededBy && (
        <p className="mb-3 text-sm">
          Superseded by{' '}
          <Link to={`/certificates/${c.supersededBy.id}`} className="text-petrol hover:underline">
            {c.supersededBy.number}
          </Link>
          ; this certificate stays on record.
        </p>
      )}
      <dl className="mb-4 grid grid-cols-1 gap-x-6 gap-y-1 rounded-md border border-line bg-white p-3 text-sm sm:grid-cols-[14rem_1fr]">
        <dt className="text-muted">SHA-256 of the PDF</dt>
        <dd>
          <code className="break-all text-xs">{c.sha256}</code>
        </dd>
        <dt className="text-muted">Signing certificate SHA-256</dt>
        <dd>
          <code className="break-all text-xs">{c.signerFingerprint}</code>
        </dd>
        <dt className="text-muted">Size</dt>
        <dd>{c.size.toLocaleString('en-GB')} bytes</dd>
      </dl>
      {content && (
        <>
          <h2 className="mb-2 text-lg">Result per container</h2>
          <ScrollRegion label="Result per container" className="mb-4">
            <table className="w-full text-sm" aria-label="Result per container">
              <thead className="bg-paper text-left">
                <tr className="border-b border-line">
                  <th className="px-3 py-2" data-key-column="container">
                    Container
                  </th>
                  <th className="px-3 py-2 text-right">Measurement</th>
                  <th className="px-3 py-2 text-right" data-key-column="score">
                    Correlation coefficient (r)
                  </th>
                  <th className="px-3 py-2">Band concordance</th>
                  <th className="px-3 py-2" data-key-column="verdict">
                    Verdict
                  </th>
                  <th className="px-3 py-2">Raw file SHA-256</th>
                </tr>
              </thead>
              <tbody>
                {content.containers.map((r) => (
                  <tr key={r.containerId} className="border-b border-line last:border-b-0">
                    <td className="px-3 py-1.5 font-medium whitespace-nowrap">{r.label}</td>
                    <td className="px-3 py-1.5 text-right tabular-nums">{r.measurementId}</td>
                    <td className="px-3 py-1.5 text-right tabular-nums">{formatScore(r.matchScore)}</td>
                    <td className="px-3 py-1.5">
                      {r.bandsTotal === null ? 'not used' : `${r.bandsMatched} of ${r.bandsTotal}`}
                    </td>
                    <td className="px-3 py-1.5">
                      <Verdict verdict={r.verdict === 'pass' ? 'pass' : 'fail'} size="sm" />
                    </td>
                    <td className="px-3 py-1.5">
                      <Hash value={r.rawFileSha256} what="raw file SHA-256" />
                    </td>
                  </tr>
                ))}
              </tbody>
            </table>
          </ScrollRegion>
          <h2 className="mb-2 text-lg">Electronic signatures</h2>
          <ul className="mb-4 flex flex-col gap-1 text-sm">
            {content.signatures.map((s, i) => (
              <li key={i}>
                <span className="font-medium">{s.printedName}</span> · {meaningLabel(s.meaning)} ·{' '}
                <DateTime value={s.signedAt} seconds /> · <span className="text-muted">{s.record}</span>
              </li>
            ))}
          </ul>
        </>
      )}
      <SupersedeDialog
        open={superseding}
        certificate={c}
        printedName={me.user.fullName}
        needsUsername={!me.user.signedOnce}
        onClose={() => setSuperseding(false)}
        onDone={(n) => {
          setSuperseding(false);
          navigate(`/certificates/${n.id}`);
        }}
      />
    </div>
  );
}
