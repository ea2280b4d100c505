/** Grade detail: facts, identity method versions, reference spectra (with upload) and its specificity against the library. */
import { useState } from 'react';
import { Link, useNavigate, useParams } from 'react-router-dom';
import { useHasRole, useSession } from '../app/session';
import { PageLoading } from '../app/lazy-page';
import { Button } from '../components/Button';
import { ErrorNote } from '../components/ErrorNote';
import { QueryState } from '../components/QueryState';
import { PageHeader } from '../components/PageHeader';
import { RecordHistory } from '../features/audit/components/RecordHistory';
import { useMaterial, useReferences, useSpecificityMatrix } from '../features/library/api';
import { EditMaterialDialog } from '../features/library/components/EditMaterialDialog';
import { IrSuitabilityDialog } from '../features/library/components/IrSuitabilityDialog';
import { MethodVersions } from '../features/library/components/MethodVersions';
import { ReferencesTable } from '../features/library/components/ReferencesTable';
import { SpecificityMatrixTable } from '../features/library/components/SpecificityMatrixTable';
import { UploadReferencesDialog } from '../features/library/components/UploadReferencesDialog';
import { TECHNIQUE_LABELS } from '../../server/modules/library/contract';

function GradeSpecificity({ materialId, technique }: { materialId: number; technique: string }) {
  const m = useSpecificityMatrix(technique);
  if (m.isPending) return <p className="text-sm text-muted">Computing…</p>;
  if (m.isError) return <ErrorNote error={m.error} onRetry={() => void m.refetch()} />;
  if (!m.data.materials.some((x) => x.id === materialId))
    return (
      <p className="text-sm text-muted">
        This grade has no approved method with approved references yet, so it is not part of the specificity matrix.
      </p>
    );
  return <SpecificityMatrixTable matrix={m.data} focusMaterialId={materialId} />;
}

export default function LibraryMaterialPage() {
  const canSeeTrail = useHasRole('auditor', 'qa_manager', 'admin');
  const id = Number(useParams().id);
  const { user } = useSession();
  const isQa = useHasRole('qa_manager');
  const material = useMaterial(id);
  const references = useReferences(id);
  const navigate = useNavigate();
  const [uploading, setUploading] = useState(false);
  const [editing, setEditing] = useState(false);
  const [decidingIr, setDecidingIr] = useState(false);

  if (material.isPending) return <PageLoading />;
  if (material.isError) return <ErrorNote error={material.error} onRetry={() => void material.refetch()} />;
  const m = material.data;
  const irUnsuitable = m.irSuitability !== null && !m.irSuitability.suitable;
  const approved = m.methods.find((x) => x.status === 'approved');
  const technique = approved?.technique ?? m.methods[0]?.technique ?? 'mid-ir-atr';
  return (
    <div className="max-w-7xl">
      <PageHeader
        eyebrow={
          <Link to="/library" className="text-petrol underline underline-offset-2">
            Reference library
          </Link>
        }
        title={`${m.code} · ${m.name}`}
        subtitle={[
          m.grade,
          m.monographRef,
          m.techniques.map((t) => TECHNIQUE_LABELS[t as keyof typeof TECHNIQUE_LABELS] ?? t).join(', '),
          m.active ? null : 'inactive',
        ]
          .filter(Boolean)
          .join(' · ')}
        actions={
          <>
            <RecordHistory
              entityType="material"
              entityId={m.id}
              label={`material ${m.code}`}
              showTrailLink={canSeeTrail}
            />
            {isQa && (
              <>
                <Button onClick={() => setEditing(true)}>Change material</Button>
                <Button onClick={() => setDecidingIr(true)}>
                  {irUnsuitable ? 'Allow identity by IR again' : 'Mark identity by IR not suitable'}
                </Button>
                <Button variant="primary" onClick={() => setUploading(true)} disabled={!m.active}>
                  Upload reference spectra
                </Button>
              </>
            )}
          </>
        }
      />
      {m.notes && <p className="-mt-2 mb-4 text-sm whitespace-pre-wrap">{m.notes}</p>}
      {irUnsuitable && (
        <p
          className="mb-4 rounded-md border border-amber/50 bg-amber-soft px-3 py-2 text-sm"
          role="note"
          data-testid="ir-not-suitable"
        >
          <strong>Identity by IR not suitable.</strong> No IR method is approved for this grade, its lots are not tested
          by IR and no IR identity certificate is issued. Its identity is tested by: {m.irSuitability!.replacementTest}{' '}
          (decided by {m.irSuitability!.decidedByName}).
        </p>
      )}

      <section aria-labelledby="refs-h" className="mb-8">
        <h2 id="refs-h" className="mb-2 text-lg">
          Reference spectra
        </h2>
        <QueryState query={references} loading={<PageLoading />}>
          {(data) => <ReferencesTable references={data} onOpen={(r) => navigate(`/library/references/${r.id}`)} />}
        </QueryState>
      </section>

      <section aria-labelledby="methods-h" className="mb-8">
        <h2 id="methods-h" className="mb-2 text-lg">
          Identity method versions
        </h2>
        <p className="mb-3 text-sm text-muted">
          An approved version never changes: a change becomes a new draft version, approved with an e-signature. Each
          identity test records the version it used.
        </p>
        <MethodVersions
          methods={m.methods}
          userId={user.id}
          firstVersionDrafts={
            references.data && !references.data.some((r) => r.status === 'approved')
              ? references.data.filter((r) => r.status === 'draft').length
              : 0
          }
          canWrite={isQa}
          signer={{ printedName: user.fullName, needsUsername: !user.signedOnce }}
        />
      </section>

      <section aria-labelledby="spec-h" className="mb-8">
        <h2 id="spec-h" className="mb-2 text-lg">
          Specificity against the approved library
        </h2>
        <GradeSpecificity materialId={m.id} technique={technique} />
      </section>

      {isQa && (
        <>
          <UploadReferencesDialog
            open={uploading}
            materialId={m.id}
            materialLabel={`${m.code} · ${m.name}`}
            onClose={() => setUploading(false)}
            onOpenReference={(rid) => navigate(`/library/references/${rid}`)}
          />
          <EditMaterialDialog open={editing} material={m} onClose={() => setEditing(false)} />
          <IrSuitabilityDialog
            open={decidingIr}
            materialId={m.id}
            label={`${m.code} ${m.name}`}
            markUnsuitable={!irUnsuitable}
            printedName={user.fullName}
            needsUsername={!user.signedOnce}
            onClose={() => setDecidingIr(false)}
          />
        </>
      )}
    </div>
  );
}
