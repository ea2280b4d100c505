/** The administrator's page of the ERP/LIMS link: machine accounts (tokens) and webhooks with their delivery state. */
import { PageHeader } from '../components/PageHeader';
import { MachineAccounts } from '../features/integration/components/MachineAccounts';
import { Webhooks } from '../features/integration/components/Webhooks';

export default function AdminIntegrationPage() {
  return (
    <div className="flex flex-col gap-4">
      <PageHeader
        title="ERP link"
        subtitle="Machine accounts that call the API with a token, and the webhooks that tell the ERP what happened to its lots."
      />
      <MachineAccounts />
      <Webhooks />
    </div>
  );
}
