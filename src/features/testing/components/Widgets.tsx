/** Work-queue widgets of testing: lots to test (operator) and tests to verify (verifier, never their own). */
import { useState } from 'react';
import { Link } from 'react-router-dom';
import { ErrorNote } from '../../../components/ErrorNote';
import { useRetryCertificate, useWorkQueue } from '../api';

function RetryButton({ lotId }: { lotId: number }) {
  const retry = useRetryCertificate();
  return (
    <span className="inline-flex items-center gap-2">
      <button
        type="button"
        className="min-h-11 rounded-md border border-line px-3 font-medium text-petrol"
        disabled={retry.isPending}
        onClick={() => retry.mutate(lotId)}
      >
        {retry.isPending ? 'Issuing…' : 'Issue now'}
      </button>
      {retry.isError && <ErrorNote error={retry.error} />}
    </span>
  );
}

function Section({ sectionKey, empty }: { sectionKey: string; empty: string }) {
  const [full, setFull] = useState(false);
  const q = useWorkQueue(full ? sectionKey : undefined);
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const s = q.data.sections.find((x) => x.key === sectionKey);
  if (!s || s.count === 0) return <p className="text-sm text-muted">{empty}</p>;
  return (
    <ul className="divide-y divide-line rounded-md border border-line bg-white" data-testid={`wq-${sectionKey}`}>
      {s.items.map((i) => (
        <li key={i.id} className="flex flex-wrap items-center gap-x-4 gap-y-1 px-3 py-1 text-sm">
          <Link
            to={i.href}
            className="inline-flex min-h-11 items-center font-medium text-petrol underline underline-offset-2"
          >
            {i.title}
          </Link>
          <span className="text-muted">{i.detail}</span>
          {i.action?.kind === 'issue-certificate' && <RetryButton lotId={i.action.lotId} />}
        </li>
      ))}
      {s.count > s.items.length && (
        <li className="px-3 py-2 text-sm text-muted">
          … and {s.count - s.items.length} more.{' '}
          <button
            type="button"
            className="min-h-11 font-medium text-petrol underline underline-offset-2"
            onClick={() => setFull(true)}
          >
            Show all {s.count}
          </button>
        </li>
      )}
    </ul>
  );
}

export function LotsToTestList() {
  return <Section sectionKey="lots-to-test" empty="No lot awaits testing." />;
}

export function TestsToVerifyList() {
  return <Section sectionKey="tests-to-verify" empty="No tests await your verification." />;
}

export function LotsToSampleList() {
  return <Section sectionKey="lots-to-sample" empty="No lot awaits sampling." />;
}

export function LotsAwaitingDispositionList() {
  return <Section sectionKey="lots-awaiting-disposition" empty="No lot awaits disposition." />;
}

export function RetestsDueList() {
  return <Section sectionKey="retests-due" empty="No retest date within 30 days." />;
}

export function CertificatesToIssueList() {
  return <Section sectionKey="certificates-to-issue" empty="Every passed lot has its certificate." />;
}
