/**
 * Verification of an identity certificate (the QR code on every certificate leads here with
 * ?number=). Upload the PDF, or type the number: Drumline says whether the file is
 * byte-identical to the stored certificate, whether its embedded signature verifies, and which
 * lot it belongs to. Every check is recorded in the audit trail.
 */
import { useEffect, useEffectEvent, useRef, useState, type FormEvent } from 'react';
import { useSearchParams } from 'react-router-dom';
import { Button } from '../components/Button';
import { ErrorNote } from '../components/ErrorNote';
import { Field, Input } from '../components/Field';
import { FileDrop } from '../components/FileDrop';
import { PageHeader } from '../components/PageHeader';
import { useVerifyByNumber, useVerifyUpload, type VerificationReport } from '../features/certificates/api';
import { VerificationResult } from '../features/certificates/components/VerificationResult';

const NUMBER_RE = /^IC-\d{4}-\d{5,}$/i;

export default function CertificateVerifyPage() {
  const [params, setParams] = useSearchParams();
  const [number, setNumber] = useState(params.get('number') ?? '');
  const [problem, setProblem] = useState<string | null>(null);
  const [report, setReport] = useState<VerificationReport | null>(null);
  const byNumber = useVerifyByNumber();
  const upload = useVerifyUpload();
  const ran = useRef<string | null>(null);

  const check = (n: string) => {
    const v = n.trim().toUpperCase();
    if (!NUMBER_RE.test(v)) return setProblem('A certificate number looks like IC-2026-00042.');
    setProblem(null);
    setReport(null);
    byNumber.mutate(v, { onSuccess: setReport });
  };

  // Opened from the QR code: check the number in the address once.
  const checkOnce = useEffectEvent((n: string | null) => {
    if (n && ran.current !== n) {
      ran.current = n;
      setNumber(n);
      check(n);
    }
  });
  useEffect(() => checkOnce(params.get('number')), [params]);

  const submit = (e: FormEvent) => {
    e.preventDefault();
    ran.current = number.trim().toUpperCase();
    setParams(number.trim() ? { number: number.trim().toUpperCase() } : {}, { replace: true });
    check(number);
  };

  return (
    <div className="max-w-5xl">
      <PageHeader
        title="Verify an identity certificate"
        subtitle="Upload a certificate PDF or type its number. Drumline compares it with the stored certificate and checks its digital signature."
      />
      <div className="mb-6 grid gap-4 lg:grid-cols-2">
        <section aria-labelledby="verify-upload" className="rounded-md border border-line bg-white p-4">
          <h2 id="verify-upload" className="mb-3 text-lg">
            Check a PDF file
          </h2>
          <FileDrop<VerificationReport>
            label="Certificate PDF"
            accept=".pdf,application/pdf"
            multiple={false}
            concurrency={1}
            upload={(file, onProgress) => upload.mutateAsync({ file, onProgress })}
            onUploaded={(_f, r) => setReport(r)}
            renderResult={(r) => (
              <span className="text-sm">
                {r.verdict === 'authentic' ? 'Authentic' : 'Not authentic'} — see the result below.
              </span>
            )}
            hint="The file is only compared and checked; it is not stored."
          />
        </section>
        <section aria-labelledby="verify-number" className="rounded-md border border-line bg-white p-4">
          <h2 id="verify-number" className="mb-3 text-lg">
            Check by certificate number
          </h2>
          <form onSubmit={submit} className="flex flex-wrap items-end gap-2">
            <Field id="verify-number-input" label="Certificate number" error={problem ?? undefined} className="w-64">
              <Input
                id="verify-number-input"
                value={number}
                onChange={(e) => setNumber(e.target.value)}
                placeholder="IC-2026-00042"
                autoComplete="off"
                bench
              />
            </Field>
            <Button type="submit" variant="primary" size="bench" busy={byNumber.isPending}>
              Check
            </Button>
          </form>
          <p className="mt-2 text-sm text-muted">
            Checks the stored copy: its bytes against the SHA-256 recorded at issue, and its signature.
          </p>
          {byNumber.isError && <ErrorNote error={byNumber.error} />}
        </section>
      </div>
      {report && <VerificationResult report={report} />}
    </div>
  );
}
