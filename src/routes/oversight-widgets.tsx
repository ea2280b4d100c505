/**
 * Work-queue widgets of the roles that do not test: the auditor (certificates to check, GMP
 * decisions to read) and the administrator (accounts to attend to). Composed here from the
 * features' hooks (features do not import each other). Read-only: each entry links to the
 * page where the record is read or the work is done.
 */
import type { ReactNode } from 'react';
import { Link } from 'react-router-dom';
import { DateTime } from '../components/DateTime';
import { ErrorNote } from '../components/ErrorNote';
import { type AuditEventSummary, useAuditEvents } from '../features/audit/api';
import { recordText } from '../features/audit/components/labels';
import { useCertificates } from '../features/certificates/api';
import { useUsers } from '../features/users/api';
import { useSession } from '../app/session';
import { roleList } from '../lib/roles';

const LIST = 'divide-y divide-line rounded-md border border-line bg-white';
const ITEM = 'flex flex-wrap items-center gap-x-4 gap-y-1 px-3 py-1 text-sm';
const LINK = 'inline-flex min-h-11 items-center font-medium text-petrol underline underline-offset-2';
const SHOWN = 8;

function daysBack(n: number): string {
  return new Date(Date.now() - n * 86_400_000).toISOString().slice(0, 10);
}

function Pending({
  q,
}: {
  q: { isPending: boolean; isError: boolean; error: unknown; refetch: () => unknown };
}): ReactNode {
  if (q.isPending) return <p className="text-sm text-muted">Loading…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  return null;
}

/** Auditor: identity certificates issued in the last 30 days, to open and check. */
export function CertificatesToCheckWidget() {
  const q = useCertificates({ from: daysBack(30) });
  if (q.isPending || q.isError) return <Pending q={q} />;
  const items = q.data.items.filter((c) => c.current);
  if (items.length === 0)
    return <p className="text-sm text-muted">No identity certificate was issued in the last 30 days.</p>;
  return (
    <ul className={LIST}>
      {items.slice(0, SHOWN).map((c) => (
        <li key={c.id} className={ITEM}>
          <Link to={`/certificates/${c.id}`} className={LINK}>
            {c.number}
          </Link>
          <span>
            lot {c.lotNumber} · {c.materialName} ({c.materialCode})
          </span>
          <span className="text-muted">
            issued <DateTime value={c.issuedAt} />
          </span>
        </li>
      ))}
      {items.length > SHOWN && (
        <li className="px-3 py-2 text-sm text-muted">… and {items.length - SHOWN} more on the certificates page.</li>
      )}
    </ul>
  );
}

const DECISION_WORDS: Record<string, string> = {
  'reference.approval-blocked': 'Reference approval refused by the specificity check',
  'method.approval-blocked': 'Method approval refused by the specificity check',
  'gate-override.requested': 'Override of the specificity check requested',
  'gate-override.confirmed': 'Override of the specificity check confirmed by a second QA manager',
  'reference.approved-with-justification': 'Reference approved with a written justification',
  'instrument.check-failed': 'Instrument check failed',
  'investigation.opened': 'Investigation opened',
  'investigation.failure-confirmed': 'Failure confirmed by QA',
  'investigation.result-invalidated': 'Result invalidated by QA',
  'investigation.closed': 'Investigation closed',
  'lot.rejected': 'Lot rejected',
};

/** Auditor: the latest GMP decisions worth reading (gate refusals, failed checks, investigations, rejections). */
export function DecisionsToReviewWidget() {
  const from = `${daysBack(30)}T00:00:00.000Z`;
  const queries = [
    useAuditEvents({ action: 'reference.approval-blocked', from }, null, SHOWN),
    useAuditEvents({ action: 'method.approval-blocked', from }, null, SHOWN),
    useAuditEvents({ action: 'gate-override.*', from }, null, SHOWN),
    useAuditEvents({ action: 'reference.approved-with-justification', from }, null, SHOWN),
    useAuditEvents({ action: 'instrument.check-failed', from }, null, SHOWN),
    useAuditEvents({ action: 'investigation.*', from }, null, SHOWN),
    useAuditEvents({ action: 'lot.rejected', from }, null, SHOWN),
  ];
  const waiting = queries.find((q) => q.isPending || q.isError);
  if (waiting) return <Pending q={waiting} />;
  const events: AuditEventSummary[] = queries
    .flatMap((q) => q.data?.events ?? [])
    .filter((e) => e.action in DECISION_WORDS)
    .sort((a, b) => b.id - a.id);
  if (events.length === 0) return <p className="text-sm text-muted">No such decision in the last 30 days.</p>;
  return (
    <ul className={LIST}>
      {events.slice(0, SHOWN).map((e) => (
        <li key={e.id} className={ITEM}>
          <Link to={`/audit?event=${e.id}`} className={LINK}>
            {DECISION_WORDS[e.action]}
          </Link>
          <span>
            {recordText(e.entityType, e.entityId, e.recordNumber)} · {e.actorName}
          </span>
          <span className="text-muted">
            <DateTime value={e.occurredAt} />
          </span>
        </li>
      ))}
    </ul>
  );
}

/**
 * Administrator: role changes waiting for a second administrator, locked accounts and new accounts
 * whose temporary password was not yet replaced.
 */
export function AccountsToAttendWidget() {
  const q = useUsers();
  const { user: me } = useSession();
  if (q.isPending || q.isError) return <Pending q={q} />;
  const now = Date.now();
  const items = q.data
    .filter((u) => u.active)
    .map((u) => ({
      user: u,
      why: u.pendingRoleChange
        ? u.pendingRoleChange.requestedBy === me.id
          ? `role change to ${roleList(u.pendingRoleChange.rolesAfter)} awaits a second administrator`
          : `role change to ${roleList(u.pendingRoleChange.rolesAfter)} asked by ${u.pendingRoleChange.requestedByName} awaits your confirmation`
        : u.lockedUntil && new Date(u.lockedUntil).getTime() > now
          ? 'locked after failed sign-ins'
          : u.mustChangePassword
            ? 'has not yet signed in to replace the temporary password'
            : null,
    }))
    .filter((x): x is { user: (typeof q.data)[number]; why: string } => x.why !== null);
  if (items.length === 0) return <p className="text-sm text-muted">No account needs attention.</p>;
  return (
    <ul className={LIST}>
      {items.map(({ user, why }) => (
        <li key={user.id} className={ITEM}>
          <Link to={`/admin/users?account=${user.id}`} className={LINK}>
            {user.fullName}
          </Link>
          <span>
            {user.username}: {why}
          </span>
          <span className="text-muted">
            created <DateTime value={user.createdAt} />
          </span>
        </li>
      ))}
    </ul>
  );
}
