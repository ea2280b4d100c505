/**
 * Reference detail: source and raw file, signatures (printed name, meaning, date and time),
 * overlay with the other references of the grade, band table (editable while draft), the
 * specificity check, and QA's approve and retire actions.
 */
import { useState } from 'react';
import { Link, useParams } from 'react-router-dom';
import { useHasRole, useSession } from '../app/session';
import { PageLoading } from '../app/lazy-page';
import { Button } from '../components/Button';
import { DateTime } from '../components/DateTime';
import { ErrorNote } from '../components/ErrorNote';
import { RecordAlerts } from '../components/RecordAlerts';
import { PageHeader } from '../components/PageHeader';
import { RecordHistory } from '../features/audit/components/RecordHistory';
import { formatBytes } from '../lib/format';
import { referenceFileUrl, useReference, useSpecificityGate } from '../features/library/api';
import { ApproveReferenceDialog } from '../features/library/components/ApproveReferenceDialog';
import { BandTable } from '../features/library/components/BandTable';
import { GateOverrideDialog } from '../features/library/components/GateOverrideDialog';
import { GateTable } from '../features/library/components/GateTable';
import { ReferenceOverlay } from '../features/library/components/ReferenceOverlay';
import { RetireReferenceDialog } from '../features/library/components/RetireReferenceDialog';
import { SignatureList } from '../features/library/components/SignatureList';
import { StatusBadge } from '../features/library/components/StatusBadge';

function GatePreview({ id }: { id: number }) {
  const [on, setOn] = useState(false);
  const gate = useSpecificityGate(id, on);
  if (!on) return <Button onClick={() => setOn(true)}>Run the specificity check now</Button>;
  if (gate.isPending)
    return <p className="text-sm text-muted">Scoring against the approved references of other materials…</p>;
  if (gate.isError) return <ErrorNote error={gate.error} />;
  return <GateTable gate={gate.data} />;
}

export default function LibraryReferencePage() {
  const canSeeTrail = useHasRole('auditor', 'qa_manager', 'admin');
  const id = Number(useParams().id);
  const { user } = useSession();
  const isQa = useHasRole('qa_manager');
  const mayDownload = useHasRole('verifier', 'qa_manager', 'auditor'); // docs/access.md: reference raw files
  const ref = useReference(id);
  const [approving, setApproving] = useState(false);
  const [requestingOverride, setRequestingOverride] = useState(false);
  const [retiring, setRetiring] = useState(false);

  if (ref.isPending) return <PageLoading />;
  if (ref.isError) return <ErrorNote error={ref.error} onRetry={() => void ref.refetch()} />;
  const r = ref.data;
  const ownUpload = r.createdBy === user.id;
  const facts: [string, React.ReactNode][] = [
    [
      'Material',
      r.material ? (
        <Link
          to={`/library/materials/${r.material.id}`}
          className="text-petrol underline underline-offset-2"
        >{`${r.material.code} · ${r.material.name}`}</Link>
      ) : (
        '—'
      ),
    ],
    ['Status', <StatusBadge status={r.status} />],
    ['Supplier', r.supplier || '—'],
    ['Supplier lot', r.supplierLot || '—'],
    ['How it was measured', r.measuredHow || '—'],
    ['Instrument', r.instrument?.name ?? '—'],
    [
      'Uploaded',
      <span>
        {r.uploadedByName}, <DateTime value={r.createdAt} />
      </span>,
    ],
    [
      'Raw file',
      r.file ? (
        <span>
          {mayDownload ? (
            <a href={referenceFileUrl(r.id)} className="text-petrol underline underline-offset-2">
              {r.file.fileName}
            </a>
          ) : (
            r.file.fileName
          )}{' '}
          ({formatBytes(r.file.size)}){' '}
          <span className="block font-mono text-xs break-all text-muted">SHA-256 {r.file.sha256}</span>
        </span>
      ) : (
        '—'
      ),
    ],
    [
      'Read as',
      r.meta
        ? `${r.meta.points ?? '?'} points; x ${r.meta.originalXUnits ?? '?'}, y ${r.meta.originalYUnits ?? '?'}${r.meta.bandsPickedWithMethodVersion ? `; bands picked under method version ${r.meta.bandsPickedWithMethodVersion}` : ''}`
        : '—',
    ],
  ];
  if (r.justification) facts.push(['Justification', <span className="whitespace-pre-wrap">{r.justification}</span>]);
  if (r.retireReason) facts.push(['Retired because', r.retireReason]);

  return (
    <div className="max-w-7xl">
      <PageHeader
        eyebrow={
          <Link
            to={r.material ? `/library/materials/${r.material.id}` : '/library'}
            className="text-petrol underline underline-offset-2"
          >
            {r.material ? `${r.material.code} · ${r.material.name}` : 'Reference library'}
          </Link>
        }
        title={`Reference ${r.code}`}
        subtitle={
          r.status === 'draft'
            ? 'Draft: bands can still change; another QA manager approves it after the specificity check.'
            : undefined
        }
        actions={
          <>
            <RecordHistory
              entityType="reference_spectrum"
              entityId={r.id}
              label={`reference ${r.code}`}
              showTrailLink={canSeeTrail}
            />
            {isQa && (
              <>
                {r.status === 'draft' && !ownUpload && (
                  <Button onClick={() => setRequestingOverride(true)}>Request gate override</Button>
                )}
                {r.status === 'draft' && (
                  <Button
                    variant="primary"
                    onClick={() => setApproving(true)}
                    disabled={ownUpload}
                    title={ownUpload ? 'You uploaded this reference; another QA manager must approve it.' : undefined}
                  >
                    Approve reference
                  </Button>
                )}
                {r.status !== 'retired' && (
                  <Button variant="danger" onClick={() => setRetiring(true)}>
                    Retire reference
                  </Button>
                )}
              </>
            )}
          </>
        }
      />
      <RecordAlerts type="reference_spectrum" id={r.id} label={`Reference ${r.code}`} />
      {isQa && r.status === 'draft' && ownUpload && (
        <p className="mb-4 rounded-md border border-amber/50 bg-amber-soft px-3 py-2 text-sm" role="note">
          You uploaded this reference, so you cannot approve it (segregation of duties). Another QA manager must approve
          it.
        </p>
      )}

      <div className="grid gap-6 lg:grid-cols-[minmax(0,1fr)_24rem]">
        <div className="flex min-w-0 flex-col gap-6">
          <section aria-labelledby="plot-h">
            <h2 id="plot-h" className="mb-2 text-lg">
              Spectrum
            </h2>
            <ReferenceOverlay referenceId={r.id} code={r.code} bands={r.bands} />
          </section>
          <section aria-labelledby="bands-h">
            <h2 id="bands-h" className="mb-2 text-lg">
              Characteristic bands
            </h2>
            <BandTable
              referenceId={r.id}
              bands={r.bands}
              editable={isQa && r.status === 'draft'}
              candidates={r.bandCandidates}
            />
          </section>
          <section aria-labelledby="gate-h">
            <h2 id="gate-h" className="mb-2 text-lg">
              Specificity check
            </h2>
            {r.specificity ? (
              <>
                <p className="mb-2 text-sm text-muted">
                  As recorded at approval (<DateTime value={r.specificity.computedAt} seconds />
                  ).
                </p>
                <GateTable gate={r.specificity} />
              </>
            ) : (
              <GatePreview id={r.id} />
            )}
          </section>
        </div>
        <aside className="flex flex-col gap-6">
          <section aria-labelledby="facts-h">
            <h2 id="facts-h" className="mb-2 text-lg">
              Record
            </h2>
            <dl className="grid grid-cols-[8rem_1fr] gap-x-3 gap-y-2 rounded-md border border-line bg-white p-3 text-sm">
              {facts.map(([k, v]) => (
                <div key={k} className="contents">
                  <dt className="text-muted">{k}</dt>
                  <dd className="min-w-0">{v}</dd>
                </div>
              ))}
            </dl>
          </section>
          <section aria-labelledby="sig-h">
            <h2 id="sig-h" className="mb-2 text-lg">
              Signatures
            </h2>
            <SignatureList signatures={r.signatures} empty="Not approved yet: no signature." />
          </section>
        </aside>
      </div>

      {isQa && (
        <>
          <ApproveReferenceDialog
            open={approving}
            referenceId={r.id}
            code={r.code}
            printedName={user.fullName}
            needsUsername={!user.signedOnce}
            pendingOverride={r.overrides.find((o) => !o.confirmedAt && o.requestedBy !== user.id) ?? null}
            onClose={() => setApproving(false)}
          />
          <GateOverrideDialog
            open={requestingOverride}
            kind="references"
            id={r.id}
            label={`reference ${r.code}`}
            printedName={user.fullName}
            needsUsername={!user.signedOnce}
            onClose={() => setRequestingOverride(false)}
          />
          <RetireReferenceDialog
            open={retiring}
            referenceId={r.id}
            code={r.code}
            printedName={user.fullName}
            needsUsername={!user.signedOnce}
            onClose={() => setRetiring(false)}
          />
        </>
      )}
    </div>
  );
}
