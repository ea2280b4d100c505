/** Reference library: materials (grades) with search and sort, and the specificity matrix of the approved library. */
import { useState } from 'react';
import { useNavigate } from 'react-router-dom';
import { useHasRole } from '../app/session';
import { PageLoading } from '../app/lazy-page';
import { useCreatePanel } from '../components/CreatePanel';
import { QueryState } from '../components/QueryState';
import { Field, Select } from '../components/Field';
import { PageHeader } from '../components/PageHeader';
import { DateTime } from '../components/DateTime';
import { useMaterials, useSpecificityMatrix } from '../features/library/api';
import { CreateMaterialForm } from '../features/library/components/CreateMaterialForm';
import { MaterialsTable } from '../features/library/components/MaterialsTable';
import { SpecificityMatrixTable } from '../features/library/components/SpecificityMatrixTable';
import { TECHNIQUE_LABELS, TECHNIQUES } from '../../server/modules/library/contract';

function Matrix() {
  const [technique, setTechnique] = useState<string>('mid-ir-atr');
  const m = useSpecificityMatrix(technique);
  return (
    <section aria-labelledby="matrix-h" className="mt-8">
      <div className="mb-2 flex flex-wrap items-end justify-between gap-3">
        <div>
          <h2 id="matrix-h" className="text-lg">
            Specificity of the approved library
          </h2>
          <p className="text-sm text-muted">
            Each identity test against the approved references of every other material.
          </p>
        </div>
        <Field id="matrix-tech" label="Technique">
          <Select id="matrix-tech" value={technique} onChange={(e) => setTechnique(e.target.value)}>
            {TECHNIQUES.map((t) => (
              <option key={t} value={t}>
                {TECHNIQUE_LABELS[t]}
              </option>
            ))}
          </Select>
        </Field>
      </div>
      <QueryState query={m} loading={<PageLoading />}>
        {(data) => (
          <>
            <SpecificityMatrixTable matrix={data} />
            <p className="mt-1 text-xs text-muted">
              Computed <DateTime value={data.computedAt} seconds />.
            </p>
          </>
        )}
      </QueryState>
    </section>
  );
}

export default function LibraryPage() {
  const materials = useMaterials();
  const isQa = useHasRole('qa_manager');
  const create = useCreatePanel({ label: 'New material', title: 'New material', allowed: isQa });
  const navigate = useNavigate();
  return (
    <div className="max-w-7xl">
      <PageHeader
        title="Reference library"
        subtitle="Materials, their identity methods and QA-approved reference spectra. Every identity test is judged against this library."
        actions={create.button}
      />
      {create.panel((close) => (
        <CreateMaterialForm onCancel={close} onCreated={(id) => navigate(`/library/materials/${id}`)} />
      ))}
      <QueryState query={materials} loading={<PageLoading />}>
        {(data) => <MaterialsTable materials={data} onOpen={(m) => navigate(`/library/materials/${m.id}`)} />}
      </QueryState>
      <Matrix />
    </div>
  );
}
