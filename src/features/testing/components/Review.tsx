/**
 * The verifier's review: every container's raw spectrum, the overlay of sample, best reference
 * and difference, scores, bands and explanation; the instrument checks, method and reference
 * versions used; then "Sign as verified" or "Return to operator" with a reason.
 */
import { useState, type ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { IntegrityNotice } from '../../../components/IntegrityNotice';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { MeasurementHistory } from './Provenance';
import { Verdict } from '../../../components/Verdict';
import { formatScore } from '../../../lib/format';
import { useLot, useReturnTest, useVerify, type MeasurementDetail, type ReviewData } from '../api';

/** The issued certificate of a lot as a link (the lot is read again after verification). */
function CertificateLink({ lotId }: { lotId: number }) {
  const lot = useLot(lotId);
  const c = lot.data?.certificate;
  if (!c || c.state !== 'issued') return null;
  return (
    <>
      {' '}
      <Link to={`/certificates/${c.id}`} className="font-medium text-petrol underline underline-offset-2">
        Open certificate {c.number}
      </Link>
    </>
  );
}
import {
  BandTable,
  CriteriaTable,
  HintNote,
  MeasurementFacts,
  MeasurementOverlay,
  RawSpectrum,
  verdictLabel,
} from './MeasurementResult';
import { mutationSigning } from '../../../lib/signing';

function ContainerReview({ m, defaultOpen }: { m: MeasurementDetail; defaultOpen: boolean }) {
  const [open, setOpen] = useState(defaultOpen);
  const r = m.result;
  return (
    <details
      open={open}
      onToggle={(e) => setOpen((e.target as HTMLDetailsElement).open)}
      className="rounded-md border border-line bg-white"
      data-testid={`review-${m.label}`}
    >
      <summary className="flex min-h-11 cursor-pointer flex-wrap items-center gap-3 px-3 py-2">
        <span className="font-medium tabular-nums">{m.label}</span>
        <Verdict verdict={m.verdict} label={verdictLabel(m.verdict)} />
        <span className="text-sm text-muted">correlation coefficient (r) {formatScore(m.matchScore)}</span>
      </summary>
      {open && r && (
        <div className="flex flex-col gap-4 border-t border-line p-3">
          {r.explanation.length > 0 && (
            <ul className="list-disc pl-5 text-sm">
              {r.explanation.map((e, i) => (
                <li key={i}>{e}</li>
              ))}
            </ul>
          )}
          <HintNote result={r} />
          <div className="grid gap-4 xl:grid-cols-2">
            <div>
              <h3 className="mb-1 text-sm font-medium">Raw spectrum as uploaded</h3>
              <RawSpectrum measurementId={m.id} label={m.label} />
            </div>
            <div>
              <h3 className="mb-1 text-sm font-medium">Sample, best reference and difference</h3>
              <MeasurementOverlay measurementId={m.id} label={m.label} bandsOf={r} />
            </div>
          </div>
          <CriteriaTable result={r} />
          <BandTable result={r} />
          <MeasurementFacts m={m} />
        </div>
      )}
    </details>
  );
}

export function ReviewView({
  data,
  me,
}: {
  data: ReviewData;
  me: { id: number; fullName: string; signedOnce: boolean; isVerifier: boolean };
}) {
  const t = data.test;
  const verify = useVerify(t.id);
  const ret = useReturnTest(t.id);
  const [dialog, setDialog] = useState<null | 'verify' | 'return'>(null);
  const own = t.performedBy?.id === me.id || t.measurerIds.includes(me.id);
  const failing = data.measurements.filter((m) => m.verdict === 'fail');
  const canDecide = me.isVerifier && t.status === 'awaiting-verification' && !own;
  const [outcome, setOutcome] = useState<ReactNode>(null);

  return (
    <div className="flex flex-col gap-5">
      <IntegrityNotice integrity={data.integrity} />
      {data.pinned && (
        <p className="rounded-md border border-line bg-white p-3 text-sm" data-testid="attempt-pin">
          This attempt keeps identity method version {data.pinned.methodVersion} and the reference set it started with (
          {data.pinned.referenceCodes.join(', ')}).
          {data.pinned.newerApprovedVersion !== null &&
            ` Version ${data.pinned.newerApprovedVersion} was approved since; it applies to new attempts only.`}
        </p>
      )}
      <section
        aria-labelledby="review-versions"
        className="grid gap-3 rounded-md border border-line bg-white p-4 text-sm md:grid-cols-3"
      >
        <h2 id="review-versions" className="sr-only">
          Versions and instrument
        </h2>
        <div>
          <h3 className="mb-1 font-medium">Identity method</h3>
          {data.methods.map((m) => (
            <p key={m.id}>
              Version {m.version} ({m.technique}), approved <DateTime value={m.approvedAt} />
            </p>
          ))}
        </div>
        <div>
          <h3 className="mb-1 font-medium">Approved references used</h3>
          {data.references.map((r) => (
            <p key={r.id}>
              {r.code} ({r.material.name}), approved <DateTime value={r.approvedAt} />
            </p>
          ))}
        </div>
        <div>
          <h3 className="mb-1 font-medium">Instrument checks used</h3>
          {data.instrumentChecks.map((c) => (
            <p key={c.id}>
              Check #{c.id}: {c.verdict === 'pass' ? 'passed' : 'failed'} <DateTime value={c.performedAt} />, valid
              until <DateTime value={c.validUntil} />
            </p>
          ))}
        </div>
      </section>

      <section aria-labelledby="review-containers" className="flex flex-col gap-2">
        <h2 id="review-containers" className="sr-only">
          Containers
        </h2>
        {data.measurements.map((m) => (
          <ContainerReview key={m.id} m={m} defaultOpen={data.measurements.length <= 6} />
        ))}
      </section>

      <MeasurementHistory entries={data.history} />

      {outcome && (
        <p role="status" className="rounded-md border border-petrol/40 bg-petrol-soft px-3 py-2">
          {outcome}
        </p>
      )}
      {t.status === 'awaiting-verification' && own && (
        <p className="rounded-md border border-amber/50 bg-amber-soft px-3 py-2 text-sm">
          You performed or measured this test, so a second person must verify it.
        </p>
      )}
      {canDecide && (
        <section aria-label="Decision" className="flex flex-col gap-3 rounded-md border border-line bg-white p-4">
          {failing.length > 0 && (
            <p className="text-sm">
              {failing.length} container(s) failed. If the data are complete and correctly recorded, sign verified: the
              lot stays in quarantine and an investigation opens for QA. A failing result cannot be sent back for
              re-measurement.
            </p>
          )}
          <div className="flex flex-wrap gap-2">
            <Button
              size="bench"
              variant="primary"
              disabled={!data.integrity.intact}
              title={
                data.integrity.intact ? undefined : 'The data no longer match what was recorded; see the warning above.'
              }
              onClick={() => setDialog('verify')}
            >
              Sign as verified
            </Button>
            {failing.length === 0 && (
              <Button size="bench" variant="danger" onClick={() => setDialog('return')}>
                Return to operator
              </Button>
            )}
          </div>
        </section>
      )}
      <ReasonSignatureDialog
        open={dialog === 'verify'}
        title="Sign the identity test as verified"
        meaningText={`reviewed the raw spectra, results, instrument check and versions of attempt ${t.attempt} of lot ${t.lot.lotNumber} and confirm they are complete and correct`}
        record={`Lot ${t.lot.lotNumber} (${t.lot.material.name}), performed by ${t.performedBy?.name ?? '—'}`}
        confirmLabel="Sign as verified"
        {...mutationSigning(me, verify, () => setDialog(null))}
        reason={{ label: 'Comment (optional)', minLength: 0, tooShort: '' }}
        onSign={(credentials, comment) =>
          verify.mutate(
            { signature: credentials, comment: comment || undefined },
            {
              onSuccess: (r) => {
                setDialog(null);
                setOutcome(
                  r.outcome === 'passed' ? (
                    <>
                      Verified. Lot {t.lot.lotNumber} passed identity
                      {r.certificate === 'issued'
                        ? '; the identity certificate was issued.'
                        : '; the certificate is pending.'}
                      {r.certificate === 'issued' && <CertificateLink lotId={t.lot.id} />}
                    </>
                  ) : (
                    <>
                      Verified. Lot {t.lot.lotNumber} failed identity and stays in quarantine; investigation{' '}
                      {r.investigation ? (
                        <Link
                          to={`/investigations/${r.investigation.id}`}
                          className="font-medium text-petrol underline underline-offset-2"
                        >
                          {r.investigation.number}
                        </Link>
                      ) : (
                        '—'
                      )}{' '}
                      was opened for QA.
                    </>
                  ),
                );
              },
            },
          )
        }
      />
      <ReasonSignatureDialog
        open={dialog === 'return'}
        title="Return the test to the operator"
        meaningText={`return attempt ${t.attempt} of lot ${t.lot.lotNumber} to the operator for the reason given`}
        record={`Lot ${t.lot.lotNumber}, performed by ${t.performedBy?.name ?? '—'}`}
        confirmLabel="Return to operator"
        {...mutationSigning(me, ret, () => setDialog(null))}
        reason={{
          label: 'Reason (required)',
          minLength: 10,
          tooShort: 'Say why the test goes back (at least 10 characters).',
        }}
        onSign={(credentials, reason) =>
          ret.mutate(
            { signature: credentials, reason },
            {
              onSuccess: () => {
                setDialog(null);
                setOutcome('Returned to the operator; the attempt stays on record.');
              },
            },
          )
        }
      />
      {(verify.isError || ret.isError) && !dialog && <ErrorNote error={verify.error ?? ret.error} />}
    </div>
  );
}
