/** Identity method versions of a grade: parameters, status, signatures; QA edits drafts and approves them. */
import { useState } from 'react';
import { Button } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { formatScore } from '../../../lib/format';
import { DEFAULT_MARGINS, TECHNIQUE_LABELS } from '../../../../server/modules/library/contract';
import { useApproveMethod, useNewMethodVersion, validationRecordUrl, type MethodVersion } from '../api';
import { GateOverrideDialog } from './GateOverrideDialog';
import { MethodForm } from './MethodForm';
import { SignatureList } from './SignatureList';
import { StatusBadge } from './StatusBadge';

export interface Signer {
  printedName: string;
  needsUsername: boolean;
}

function summary(m: MethodVersion): [string, string][] {
  const p = m.params;
  const tol =
    p.bandTolerance.mode === 'absolute'
      ? `±${p.bandTolerance.cm1} cm⁻¹`
      : `±${p.bandTolerance.percent} % of the position`;
  return [
    ['Technique', TECHNIQUE_LABELS[p.technique] ?? p.technique],
    ['Range', `${p.range.to}–${p.range.from} cm⁻¹, grid ${p.gridStep} cm⁻¹`],
    [
      'Excluded',
      p.excludedRegions.length
        ? p.excludedRegions.map((r) => `${r.to}–${r.from} cm⁻¹ (${r.label})`).join('; ')
        : 'none',
    ],
    [
      'Preparation',
      `baseline ${p.baseline}, normalisation ${p.normalisation}, Savitzky-Golay ${p.smoothing.windowSize} points, order ${p.smoothing.polynomial}, derivative ${p.smoothing.derivative}`,
    ],
    [
      'Criteria',
      `correlation coefficient (r) ≥ ${formatScore(p.thresholds.minCorrelation)}` +
        (p.thresholds.minDerivativeCorrelation !== null
          ? `, first-derivative correlation coefficient (r) ≥ ${formatScore(p.thresholds.minDerivativeCorrelation)}`
          : '') +
        (p.thresholds.maxMahalanobis !== null ? `, Mahalanobis distance ≤ ${p.thresholds.maxMahalanobis}` : ''),
    ],
    [
      'Bands',
      p.peakProminence === null
        ? 'band concordance off'
        : `bands of at least ${Math.round(p.peakProminence * 100)} % of the strongest, tolerance ${tol}` +
          (p.maxExtraBandProminence !== null
            ? `; an extra band of ${Math.round(p.maxExtraBandProminence * 100)} % or more fails`
            : ''),
    ],
    [
      'Approval margins',
      (() => {
        const g = { ...DEFAULT_MARGINS, ...(p.specificityMargins ?? {}) };
        return `another material must stay ${g.correlation} below the correlation limit, ${g.derivativeCorrelation} below the derivative limit, ${g.mahalanobis} above the distance limit, ${g.residual} above the residual limit, ${g.bands} band(s) beyond the band limits`;
      })(),
    ],
    [
      'Quality',
      `band height ≥ ${p.quality.minMaxAbsorbance}, absorbance ≤ ${p.quality.maxAbsorbance}, signal-to-noise ≥ ${p.quality.minSignalToNoise}`,
    ],
  ];
}

function VersionCard({
  m,
  canWrite,
  signer,
  userId,
  firstVersionDrafts,
}: {
  m: MethodVersion;
  canWrite: boolean;
  signer: Signer;
  userId: number;
  firstVersionDrafts: number;
}) {
  const [editing, setEditing] = useState(false);
  const [signing, setSigning] = useState(false);
  const [requesting, setRequesting] = useState(false);
  const pending = m.overrides.find((o) => !o.confirmedAt && o.requestedBy !== userId) ?? null;
  const approve = useApproveMethod();
  const newVersion = useNewMethodVersion();
  return (
    <article
      className="rounded-md border border-line bg-white p-4"
      aria-label={`Method version ${m.version}`}
      data-testid={`method-v${m.version}`}
    >
      <header className="flex flex-wrap items-center gap-3">
        <h3 className="text-base font-semibold">Version {m.version}</h3>
        <StatusBadge status={m.status} />
        <span className="text-sm text-muted">
          created <DateTime value={m.createdAt} />
          {m.approvedAt && (
            <>
              {' '}
              · approved <DateTime value={m.approvedAt} />
            </>
          )}
        </span>
        {canWrite && m.status === 'draft' && !editing && (
          <span className="ml-auto flex gap-2">
            <Button onClick={() => setEditing(true)}>Edit draft</Button>
            {m.createdBy !== userId && <Button onClick={() => setRequesting(true)}>Request gate override</Button>}
            <Button
              variant="primary"
              onClick={() => setSigning(true)}
              disabled={m.createdBy === userId}
              title={m.createdBy === userId ? 'You wrote this version; another QA manager must approve it.' : undefined}
            >
              Approve method version
            </Button>
          </span>
        )}
        {canWrite && m.status === 'approved' && (
          <span className="ml-auto">
            <Button
              busy={newVersion.isPending}
              onClick={() => newVersion.mutate({ id: m.id, changeNote: `Based on version ${m.version}.` })}
            >
              Start a new draft version
            </Button>
          </span>
        )}
      </header>
      {m.changeNote && <p className="mt-2 text-sm">{m.changeNote}</p>}
      {newVersion.isError && <ErrorNote error={newVersion.error} className="mt-2" />}
      {editing ? (
        <div className="mt-3">
          <MethodForm method={m} onDone={() => setEditing(false)} />
        </div>
      ) : (
        <dl className="mt-3 grid gap-x-4 gap-y-1 text-sm sm:grid-cols-[9rem_1fr]">
          {summary(m).map(([k, v]) => (
            <div key={k} className="contents">
              <dt className="text-muted">{k}</dt>
              <dd>{v}</dd>
            </div>
          ))}
        </dl>
      )}
      {m.approval && (
        <p className="mt-3 text-sm">
          <a className="text-petrol underline underline-offset-2" href={validationRecordUrl(m.id)} download>
            Download the validation record (PDF)
          </a>{' '}
          <span className="text-muted">
            specificity gate {m.approval.gate.passed ? 'passed' : 'overridden'} against{' '}
            {new Set(m.approval.gate.rows.map((r) => r.otherMaterialCode)).size} other material(s)
            {m.approval.firstReferenceIds.length > 0 &&
              `; approved with its first ${m.approval.firstReferenceIds.length} reference(s)`}
          </span>
        </p>
      )}
      {m.overrides.length > 0 && (
        <ul className="mt-2 text-sm" aria-label="Gate overrides">
          {m.overrides.map((o) => (
            <li key={o.id}>
              Override {o.id} ({o.changeControl}) requested by {o.requestedByName}:{' '}
              {o.confirmedByName ? `confirmed by ${o.confirmedByName}` : 'awaiting a second QA manager'} —{' '}
              {o.justification}
            </li>
          ))}
        </ul>
      )}
      {m.signatures.length > 0 && (
        <div className="mt-3">
          <SignatureList signatures={m.signatures} />
        </div>
      )}
      <GateOverrideDialog
        open={requesting}
        kind="methods"
        id={m.id}
        label={`method version ${m.version}`}
        printedName={signer.printedName}
        needsUsername={signer.needsUsername}
        onClose={() => setRequesting(false)}
      />
      <SignatureDialog
        open={signing}
        title={`Approve identity method version ${m.version}`}
        meaningText={
          (pending
            ? `confirm the gate override requested by ${pending.requestedByName} (${pending.changeControl}) and `
            : '') +
          `approve version ${m.version} of this identity method after its specificity check, with its validation record` +
          (firstVersionDrafts > 0 ? ` and its first ${firstVersionDrafts} reference spectra` : '') +
          '; approved, it cannot be changed and every new identity test will use it'
        }
        printedName={signer.printedName}
        needsUsername={signer.needsUsername}
        confirmLabel="Approve method version"
        busy={approve.isPending}
        error={approve.error}
        onCancel={() => {
          setSigning(false);
          approve.reset();
        }}
        onSign={(signature) =>
          approve.mutate({ id: m.id, signature, overrideId: pending?.id }, { onSuccess: () => setSigning(false) })
        }
      />
    </article>
  );
}

export function MethodVersions({
  methods,
  canWrite,
  signer,
  userId,
  firstVersionDrafts,
}: {
  methods: MethodVersion[];
  canWrite: boolean;
  signer: Signer;
  userId: number;
  /** Draft references approved with the first version (0 once the material has approved references). */
  firstVersionDrafts: number;
}) {
  if (methods.length === 0) return <p className="text-sm text-muted">No identity method yet.</p>;
  return (
    <div className="flex flex-col gap-3">
      {methods.map((m) => (
        <VersionCard
          key={m.id}
          m={m}
          canWrite={canWrite}
          signer={signer}
          userId={userId}
          firstVersionDrafts={firstVersionDrafts}
        />
      ))}
    </div>
  );
}
