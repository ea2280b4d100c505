/** QA's master data of incoming goods: the sources of each material with their qualification status and sampling plan, and the material master. */
import { useHasRole, useSession } from '../app/session';
import { PageHeader } from '../components/PageHeader';
import { MaterialMaster } from '../features/master-data/components/MaterialMaster';
import { SourcesTable } from '../features/master-data/components/SourcesTable';

export default function MasterDataPage() {
  const { user } = useSession();
  const isQa = useHasRole('qa_manager');
  return (
    <div className="flex flex-col gap-4">
      <PageHeader
        title="Suppliers and materials"
        subtitle="Approved sources with their qualification status and sampling plan, and each material's retest interval, shelf life, risk class and release checks. Every change is signed."
      />
      <section aria-labelledby="sources" className="rounded-md border border-line bg-white p-4">
        <h2 id="sources" className="mb-2 text-lg">
          Sources and sampling plans
        </h2>
        <SourcesTable me={user} canEdit={isQa} />
      </section>
      <section aria-labelledby="materials" className="rounded-md border border-line bg-white p-4">
        <h2 id="materials" className="mb-2 text-lg">
          Material master
        </h2>
        <MaterialMaster me={user} canEdit={isQa} />
      </section>
    </div>
  );
}
