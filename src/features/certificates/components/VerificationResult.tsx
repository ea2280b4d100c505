/**
 * The answer of a certificate check, in words and icons: authentic or not, then each question
 * on its own line (byte-identical to the stored certificate? signature valid? signed with the
 * site's certificate?), the lot it belongs to and the reasons when something is wrong.
 */
import type { ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { DateTime } from '../../../components/DateTime';
import { Verdict } from '../../../components/Verdict';
import type { VerificationReport } from '../api';
import { CertificateState } from './CertificateState';

function YesNo({ value, yes = 'Yes', no = 'No' }: { value: boolean | null | undefined; yes?: string; no?: string }) {
  if (value === null || value === undefined) return <Verdict verdict="pending" label="Not checked" size="sm" />;
  return <Verdict verdict={value ? 'pass' : 'fail'} label={value ? yes : no} size="sm" />;
}

function Row({ label, children, testId }: { label: string; children: ReactNode; testId?: string }) {
  return (
    <div
      className="grid grid-cols-1 gap-1 border-b border-line py-2 last:border-b-0 sm:grid-cols-[18rem_1fr]"
      data-testid={testId}
    >
      <dt className="text-sm text-muted">{label}</dt>
      <dd className="text-sm">{children}</dd>
    </div>
  );
}

export function VerificationResult({ report }: { report: VerificationReport }) {
  const authentic = report.verdict === 'authentic';
  const c = report.certificate;
  return (
    <section
      aria-labelledby="verification-verdict"
      className={`rounded-md border bg-white p-4 ${authentic ? 'border-pass/50' : 'border-fail/50'}`}
      data-testid="verification-result"
      data-verdict={report.verdict}
    >
      <h2 id="verification-verdict" className="mb-2 flex flex-wrap items-center gap-3">
        <Verdict verdict={authentic ? 'pass' : 'fail'} label={authentic ? 'Authentic' : 'Not authentic'} size="lg" />
        <span className="text-sm text-muted">
          {report.checkedBy === 'upload' ? 'Checked the uploaded file' : 'Checked the stored certificate by its number'}
        </span>
      </h2>
      <p className="mb-3 text-sm">{report.summary}</p>
      <dl>
        <Row
          label={
            report.checkedBy === 'upload'
              ? 'Byte-identical to the stored certificate'
              : 'Stored bytes match the SHA-256 recorded at issue'
          }
          testId="byte-identical"
        >
          <YesNo value={report.byteIdentical} />
        </Row>
        <Row label="Embedded digital signature valid" testId="signature-valid">
          <YesNo value={report.signature ? report.signature.valid : null} />
          {report.signature?.problem && <span className="ml-2 text-fail">{report.signature.problem}</span>}
        </Row>
        <Row label="Signed with the site's signing certificate" testId="signed-by-site">
          <YesNo value={report.signedBySite} />
        </Row>
        <Row label="Certificate">
          {c ? (
            <span className="flex flex-wrap items-center gap-2">
              <Link to={`/certificates/${c.id}`} className="font-medium text-petrol underline-offset-2 hover:underline">
                {c.number}
              </Link>
              <span className="text-muted">
                issued <DateTime value={c.issuedAt} />
              </span>
              <CertificateState certificate={c} />
            </span>
          ) : (
            <span className="text-muted">none found</span>
          )}
        </Row>
        <Row label="Lot" testId="verified-lot">
          {report.lot ? (
            <span>
              <Link
                to={`/lots/${report.lot.id}`}
                className="font-medium text-petrol underline-offset-2 hover:underline"
              >
                {report.lot.lotNumber}
              </Link>{' '}
              <span className="text-muted">
                {report.lot.materialName} ({report.lot.materialCode})
              </span>
            </span>
          ) : (
            <span className="text-muted">unknown</span>
          )}
        </Row>
        {report.signature?.signerSubject && (
          <Row label="Signer">
            <span>{report.signature.signerSubject}</span>
            {report.signature.signingTime && (
              <span className="text-muted">
                {' '}
                · signed <DateTime value={report.signature.signingTime} seconds />
              </span>
            )}
          </Row>
        )}
        {report.signature && (
          <Row label="Signature time-stamp (RFC 3161)" testId="time-stamp">
            {report.signature.timeStamp ? (
              <span>
                <YesNo value={report.signature.timeStamp.valid} />
                {report.signature.timeStamp.time && (
                  <span className="text-muted">
                    {' '}
                    · <DateTime value={report.signature.timeStamp.time} seconds />
                    {report.signature.timeStamp.authority ? ` by ${report.signature.timeStamp.authority}` : ''}
                  </span>
                )}
                {report.signature.timeStamp.problem && (
                  <span className="ml-2 text-fail">{report.signature.timeStamp.problem}</span>
                )}
              </span>
            ) : (
              <span className="text-muted">none (the signature carries no time-stamp)</span>
            )}
          </Row>
        )}
        {report.signature?.fingerprint && (
          <Row label="Signing certificate SHA-256">
            <code className="break-all text-xs">{report.signature.fingerprint}</code>
          </Row>
        )}
        {report.fileSha256 && (
          <Row label={report.checkedBy === 'upload' ? 'SHA-256 of the uploaded file' : 'SHA-256 of the stored file'}>
            <code className="break-all text-xs">{report.fileSha256}</code>
          </Row>
        )}
      </dl>
      {report.reasons.length > 0 && (
        <ul className="mt-3 list-disc pl-5 text-sm" aria-label="Findings">
          {report.reasons.map((r) => (
            <li key={r}>{r}</li>
          ))}
        </ul>
      )}
    </section>
  );
}
