/** One integrity alert: what no longer matches, the records it concerns, and QA's sign-off. */
import { Link, useParams } from 'react-router-dom';
import { PageLoading } from '../app/lazy-page';
import { useHasRole, useSession } from '../app/session';
import { DateTime } from '../components/DateTime';
import { ErrorNote } from '../components/ErrorNote';
import { PageHeader } from '../components/PageHeader';
import { SignatureCards } from '../components/SignatureCards';
import { useAlert } from '../features/integrity/api';
import { SignOffPanel } from '../features/integrity/components/SignOffPanel';

export default function IntegrityAlertPage() {
  const id = Number(useParams().id);
  const q = useAlert(id);
  const { user } = useSession();
  const isQa = useHasRole('qa_manager');
  if (q.isPending) return <PageLoading />;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const a = q.data;
  return (
    <div className="flex max-w-5xl flex-col gap-5">
      <PageHeader
        eyebrow={<Link to="/integrity">Data integrity</Link>}
        title={`Integrity alert ${a.id}`}
        subtitle={a.kindLabel}
      />
      <section className="rounded-md border border-line bg-white p-4 text-sm">
        <p>{a.summary}</p>
        <dl className="mt-3 grid grid-cols-[auto_1fr] gap-x-4 gap-y-1">
          <dt className="text-muted">Recorded</dt>
          <dd className="font-mono break-all">{a.expected}</dd>
          <dt className="text-muted">Found</dt>
          <dd className="font-mono break-all">{a.found}</dd>
          <dt className="text-muted">Found</dt>
          <dd>
            <DateTime value={a.foundAt} /> by{' '}
            {a.foundIn === 'sweep' ? 'the integrity sweep' : `${a.foundBy ?? 'Drumline'} (${a.foundIn})`}
          </dd>
          <dt className="text-muted">Records</dt>
          <dd>
            <ul>
              {a.records.map((r) => (
                <li key={`${r.type}-${r.id}`}>
                  {r.href ? (
                    <Link to={r.href} className="text-petrol underline underline-offset-2">
                      {r.label}
                    </Link>
                  ) : (
                    r.label
                  )}
                </li>
              ))}
            </ul>
          </dd>
        </dl>
      </section>
      {a.signOff ? (
        <section aria-labelledby="signed-off" className="rounded-md border border-line bg-white p-4 text-sm">
          <h2 id="signed-off" className="text-lg">
            Signed off
          </h2>
          <p className="mt-1">{a.signOff.comment}</p>
          {a.signOff.signature && <SignatureCards signatures={[a.signOff.signature]} empty="" />}
        </section>
      ) : isQa ? (
        <SignOffPanel alert={a} me={user} />
      ) : (
        <p className="text-sm text-muted">Open: a QA manager reviews it and signs it off.</p>
      )}
    </div>
  );
}
