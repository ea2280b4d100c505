import { useLocation } from 'react-router-dom';
import { useSession } from '../app/session';
import { widgetsFor } from '../app/work-queue';
import { ErrorBoundary } from '../app/error-boundary';
import { EmptyState } from '../components/EmptyState';
import { PageHeader } from '../components/PageHeader';
import { roleList } from '../lib/roles';

export default function HomePage() {
  const { user, site } = useSession();
  const notice = (useLocation().state as { notice?: string } | null)?.notice;
  const widgets = widgetsFor(user.roles);
  return (
    <div className="max-w-5xl">
      <PageHeader
        title={`Work queue of ${user.fullName}`}
        subtitle={`Signed in as ${user.username} at ${site.name}. Roles: ${roleList(user.roles)}.`}
      />
      {notice && (
        <p role="status" className="mb-4 rounded-md border border-pass/40 bg-pass-soft px-3 py-2 text-sm">
          {notice}
        </p>
      )}
      {widgets.length === 0 ? (
        <EmptyState title="Nothing awaits you." />
      ) : (
        <div className="flex flex-col gap-6">
          {widgets.map((w) => (
            <section key={w.id} aria-labelledby={`wq-${w.id}`}>
              <h2 id={`wq-${w.id}`} className="mb-2 text-lg">
                {w.title}
              </h2>
              <ErrorBoundary>
                <w.Component />
              </ErrorBoundary>
            </section>
          ))}
        </div>
      )}
    </div>
  );
}
