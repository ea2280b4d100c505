/** A lot's identity status and storage status in words, with an icon where a verdict is meant. */
import { Verdict } from '../../../components/Verdict';
import { IDENTITY_STATUS_LABELS, type IdentityStatus as Status } from '../../../../server/modules/lots/contract';

export function IdentityStatusBadge({ status }: { status: string }) {
  const label = IDENTITY_STATUS_LABELS[status as Status] ?? status;
  if (status === 'passed') return <Verdict verdict="pass" label={label} />;
  if (status === 'failed' || status === 'rejected') return <Verdict verdict="fail" label={label} />;
  return <Verdict verdict="pending" label={label} />;
}

export function LotStatusText({ status }: { status: string }) {
  const text =
    status === 'quarantine'
      ? 'Quarantine'
      : status === 'rejected'
        ? 'Rejected'
        : status === 'released'
          ? 'Released'
          : status;
  return (
    <span
      className={`inline-flex items-center rounded-md border px-2 py-0.5 text-sm font-medium ${status === 'rejected' ? 'border-fail/40 text-fail' : 'border-amber/50 text-amber-ink'}`}
    >
      {text}
    </span>
  );
}
