/** Data integrity: open alerts for QA, every alert, and the sweeps (QA managers and auditors). */
import { useState } from 'react';
import { PageHeader } from '../components/PageHeader';
import { AlertsList } from '../features/integrity/components/AlertsList';
import { RunsPanel } from '../features/integrity/components/RunsPanel';

export default function IntegrityPage() {
  const [all, setAll] = useState(false);
  return (
    <div className="flex max-w-7xl flex-col gap-6">
      <PageHeader
        title="Data integrity"
        subtitle="Stored raw files, certificates, signed records and role grants re-checked against their recorded hashes. A mismatch stays open until QA signs it off."
      />
      <section aria-labelledby="alerts" className="flex flex-col gap-2">
        <div className="flex flex-wrap items-center justify-between gap-2">
          <h2 id="alerts" className="text-lg">
            {all ? 'All integrity alerts' : 'Open integrity alerts'}
          </h2>
          <label className="inline-flex min-h-11 items-center gap-2 text-sm">
            <input type="checkbox" checked={all} onChange={(e) => setAll(e.target.checked)} />
            Show signed-off alerts too
          </label>
        </div>
        <AlertsList
          status={all ? 'all' : 'open'}
          empty={all ? 'No integrity alert was ever raised.' : 'No integrity alert is open.'}
        />
      </section>
      <RunsPanel />
    </div>
  );
}
