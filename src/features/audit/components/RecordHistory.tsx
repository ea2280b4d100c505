/**
 * The history of one record: its audit events in time order (oldest first) with the values that
 * changed, and the e-signatures on it (printed name, meaning, date and time - 21 CFR 11.50).
 *
 * Drop it into any record page:
 *   <RecordHistory entityType="lot" entityId={lot.id} label={`Lot ${lot.lotNumber}`} />
 * It renders a "History" button that opens the history in a side panel. RecordHistoryList is the
 * list alone, for a page that shows it inline. Record types are those the server writes to the
 * trail: lot, identity_test, measurement, reference_spectrum, identity_method, material,
 * instrument, instrument_check, instrument_check_spec, investigation, certificate, user.
 */
import { useState } from 'react';
import { Link } from 'react-router-dom';
import { Button, type ButtonSize } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ClockIcon } from '../../../components/Icons';
import { SignatureCards } from '../../../components/SignatureCards';
import { ErrorNote } from '../../../components/ErrorNote';
import { formatNumber } from '../../../lib/format';
import { HISTORY_CAP, useRecordHistory, type AuditEventDetail, type SignatureOnRecord } from '../api';
import { ChangesTable } from './ChangesTable';
import { Drawer } from './Drawer';
import { namedValueText, recordTypeLabel } from './labels';

export interface RecordHistoryProps {
  entityType: string;
  entityId: string | number;
  /** how the record is named in the panel's title, e.g. "Lot RM-2026-00042" */
  label?: string;
  /** button text (default "History") */
  buttonLabel?: string;
  size?: ButtonSize;
  /** offer a link to the full audit trail filtered to this record (for auditors, QA, admin) */
  showTrailLink?: boolean;
}

export function RecordHistory({
  entityType,
  entityId,
  label,
  buttonLabel = 'History',
  size = 'desk',
  showTrailLink,
}: RecordHistoryProps) {
  const [open, setOpen] = useState(false);
  const name = label ?? `${recordTypeLabel(entityType)} ${entityId}`;
  return (
    <>
      <Button size={size} onClick={() => setOpen(true)} aria-haspopup="dialog">
        <ClockIcon />
        {buttonLabel}
      </Button>
      <Drawer
        open={open}
        onClose={() => setOpen(false)}
        title={`History of ${name}`}
        subtitle="Every recorded event in time order, with the signatures on this record."
        wide
      >
        {open && <RecordHistoryList entityType={entityType} entityId={entityId} showTrailLink={showTrailLink} />}
      </Drawer>
    </>
  );
}

export function RecordHistoryList({
  entityType,
  entityId,
  showTrailLink,
}: {
  entityType: string;
  entityId: string | number;
  showTrailLink?: boolean;
}) {
  const h = useRecordHistory(entityType, entityId, true);
  if (h.isPending) return <p className="text-muted">Loading the history…</p>;
  if (h.isError) return <ErrorNote error={h.error} onRetry={() => void h.refetch()} />;
  const { events, signatures, truncated } = h.data;
  const trail = `/audit?entityType=${encodeURIComponent(entityType)}&entityId=${encodeURIComponent(String(entityId))}&sort=asc`;
  return (
    <div className="flex flex-col gap-6" data-testid="record-history">
      <section aria-labelledby="rh-signatures">
        <h3 id="rh-signatures" className="mb-2 text-lg">
          Signatures on this record
        </h3>
        <SignatureItems signatures={signatures} />
      </section>
      <section aria-labelledby="rh-events">
        <h3 id="rh-events" className="mb-2 text-lg">
          Events ({formatNumber(events.length)}
          {truncated ? '+' : ''})
        </h3>
        {truncated && (
          <p className="mb-2 rounded-md border border-amber/50 bg-amber-soft px-3 py-2 text-sm">
            This record has more than {formatNumber(HISTORY_CAP)} events; the oldest {formatNumber(HISTORY_CAP)} are
            shown.{' '}
            {showTrailLink && (
              <Link to={trail} className="text-petrol underline underline-offset-2">
                Open all of them in the audit trail
              </Link>
            )}
          </p>
        )}
        {events.length === 0 ? (
          <p className="text-sm text-muted">No events are recorded for this record.</p>
        ) : (
          <ol className="flex flex-col gap-2">
            {events.map((e) => (
              <HistoryItem key={e.id} e={e} />
            ))}
          </ol>
        )}
        {showTrailLink && !truncated && events.length > 0 && (
          <p className="mt-3 text-sm">
            <Link to={trail} className="text-petrol underline underline-offset-2">
              Open these events in the audit trail
            </Link>
          </p>
        )}
      </section>
    </div>
  );
}

function SignatureItems({ signatures }: { signatures: SignatureOnRecord[] }) {
  return <SignatureCards signatures={signatures} empty="No e-signature on this record." testId="history-signature" />;
}

function HistoryItem({ e }: { e: AuditEventDetail }) {
  const [open, setOpen] = useState(false);
  const changed = e.changes.filter((c) => c.kind !== 'unchanged');
  return (
    <li className="rounded-md border border-line bg-white px-3 py-2 text-sm" data-testid="history-event">
      <div className="flex flex-wrap items-baseline gap-x-3 gap-y-1">
        <DateTime value={e.occurredAt} seconds />
        <span>
          {e.actionWords} <span className="font-mono text-xs text-muted">({e.action})</span>
        </span>
        <span>
          {e.actorName}
          {e.actorUsername && <span className="text-muted"> ({e.actorUsername})</span>}
        </span>
        <span className="ml-auto text-xs text-muted tabular-nums">event {e.id}</span>
      </div>
      {e.reason && (
        <p className="mt-1 whitespace-pre-wrap">
          <span className="text-muted">Reason: </span>
          {e.reason}
        </p>
      )}
      {changed.length > 0 && (
        <ul className="mt-1 flex flex-col gap-0.5">
          {changed.slice(0, 4).map((c) => (
            <li key={c.path} className="text-xs break-all" data-testid="history-change">
              {c.label}: {c.kind === 'added' ? '' : `${namedValueText(c.before, c.beforeName)} → `}
              {c.kind === 'removed' ? '(removed)' : namedValueText(c.after, c.afterName)}
            </li>
          ))}
          {changed.length > 4 && <li className="text-xs text-muted">and {changed.length - 4} more field(s)</li>}
        </ul>
      )}
      {e.changes.length > 0 && (
        <button
          type="button"
          onClick={() => setOpen((x) => !x)}
          className="mt-1 text-xs text-petrol underline underline-offset-2"
          aria-expanded={open}
        >
          {open ? 'Hide the values' : 'Before and after, side by side'}
        </button>
      )}
      {open && (
        <div className="mt-2">
          <ChangesTable changes={e.changes} hasBefore={e.before !== null} hasAfter={e.after !== null} />
        </div>
      )}
    </li>
  );
}
