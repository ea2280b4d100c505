/** One audit event: who, when (site time and UTC), what, on which record, why; values before and after side by side. */
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { useAuditEvent } from '../api';
import { ChangesTable } from './ChangesTable';
import { recordText } from './labels';

export interface EventDetailProps {
  id: number;
  /** filter the trail to this record's events */
  onShowRecord?: (entityType: string, entityId: string) => void;
}

export function EventDetail({ id, onShowRecord }: EventDetailProps) {
  const ev = useAuditEvent(id);
  if (ev.isPending) return <p className="text-muted">Loading event {id}…</p>;
  if (ev.isError) return <ErrorNote error={ev.error} onRetry={() => void ev.refetch()} />;
  const e = ev.data;
  return (
    <div className="flex flex-col gap-5" data-testid="event-detail">
      <dl className="grid grid-cols-[9rem_1fr] gap-x-4 gap-y-1.5 text-sm">
        <dt className="text-muted">Event</dt>
        <dd className="tabular-nums">{e.id}</dd>
        <dt className="text-muted">When</dt>
        <dd>
          <DateTime value={e.occurredAt} seconds />{' '}
          <span className="text-muted">· {e.occurredAt.replace('T', ' ').replace('Z', ' UTC')}</span>
        </dd>
        <dt className="text-muted">Who</dt>
        <dd>
          {e.actorName}
          {e.actorId === null ? (
            <span className="text-muted"> (no signed-in account)</span>
          ) : (
            <span className="text-muted">
              {' '}
              ({e.actorUsername ? `user name ${e.actorUsername}, ` : ''}stored id {e.actorId})
            </span>
          )}
        </dd>
        <dt className="text-muted">What</dt>
        <dd>
          {e.actionWords} <span className="font-mono text-[13px] text-muted">({e.action})</span>
        </dd>
        <dt className="text-muted">Record</dt>
        <dd>
          {recordText(e.entityType, e.entityId, e.recordNumber)}
          {e.entityId && e.recordNumber && <span className="text-muted tabular-nums"> (stored id {e.entityId})</span>}
          {e.entityId && onShowRecord && (
            <button
              type="button"
              onClick={() => onShowRecord(e.entityType, e.entityId!)}
              className="ml-3 text-petrol underline underline-offset-2"
            >
              All events of this record
            </button>
          )}
        </dd>
        <dt className="text-muted">Reason</dt>
        <dd className="whitespace-pre-wrap">{e.reason ?? <span className="text-muted">none given</span>}</dd>
        <dt className="text-muted">From address</dt>
        <dd className="font-mono text-[13px]">{e.ip ?? '—'}</dd>
      </dl>

      <section aria-labelledby={`ev-${id}-values`}>
        <h3 id={`ev-${id}-values`} className="mb-2 text-lg">
          Values before and after
        </h3>
        <ChangesTable changes={e.changes} hasBefore={e.before !== null} hasAfter={e.after !== null} />
        <details className="mt-2 text-sm">
          <summary className="cursor-pointer text-petrol">Values as recorded (JSON)</summary>
          <div className="mt-2 grid gap-2 md:grid-cols-2">
            <pre className="overflow-x-auto rounded-md border border-line bg-white p-2 font-mono text-xs">
              {e.before === null ? '—' : JSON.stringify(e.before, null, 2)}
            </pre>
            <pre className="overflow-x-auto rounded-md border border-line bg-white p-2 font-mono text-xs">
              {e.after === null ? '—' : JSON.stringify(e.after, null, 2)}
            </pre>
          </div>
        </details>
      </section>

      <section aria-labelledby={`ev-${id}-chain`} className="text-sm">
        <h3 id={`ev-${id}-chain`} className="mb-1 text-lg">
          Place in the chain
        </h3>
        <p className="text-muted">
          Each event carries the hash of the one before it; a change behind the application's back breaks the chain
          check.
        </p>
        <dl className="mt-2 grid grid-cols-[9rem_1fr] gap-x-4 gap-y-1">
          <dt className="text-muted">Previous hash</dt>
          <dd className="font-mono text-xs break-all">{e.prevHash}</dd>
          <dt className="text-muted">This event's hash</dt>
          <dd className="font-mono text-xs break-all">{e.hash}</dd>
        </dl>
      </section>
    </div>
  );
}
