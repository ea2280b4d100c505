/** Grade detail: facts, identity method versions, reference spectra (with upload) and its specificity against the library. */
import { useState } from 'react';
import { Link, useNavigate, useParams } from 'react-router-dom';
import { useHasRole, useSession } from '../app/session';
import { PageLoading } from '../app/lazy-page';
import { Button } from '../components/Button';
import { ErrorNote } from '../components/ErrorNote';
import { PageHeader } from '../components/PageHeader';
import { RecordHistory } from '../features/audit/components/RecordHistory';
import { useMaterial, useReferences, useSpecificityMatrix } from '../features/library/api';
import { EditMaterialDialog } from '../features/library/components/EditMaterialDialog';
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

  if (material.isPending) return <PageLoading />;
  if (material.isError) return <ErrorNote error={material.error} onRetry={() => void material.refetch()} />;
  const m = material.data;
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
                <Button variant="primary" onClick={() => setUploading(true)} disabled={!m.active}>
                  Upload reference spectra
                </Button>
              </>
            )}
          </>
        }
      />
      {m.notes && <p className="-mt-2 mb-4 text-sm whitespace-pre-wrap">{m.notes}</p>}

      <section aria-labelledby="refs-h" className="mb-8">
        <h2 id="refs-h" className="mb-2 text-lg">
          Reference spectra
        </h2>
        {references.isPending ? (
          <PageLoading />
        ) : references.isError ? (
          <ErrorNote error={references.error} onRetry={() => void references.refetch()} />
        ) : (
          <ReferencesTable references={references.data} onOpen={(r) => navigate(`/library/references/${r.id}`)} />
        )}
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
        </>
      )}
    </div>
  );
}
