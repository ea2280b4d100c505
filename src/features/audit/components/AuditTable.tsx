/**
 * One page of events, newest or oldest first (the server sorts; click "Time" to turn the order).
 * Rows open the event's detail (click, Enter or Space; arrow keys move between rows).
 */
import { ScrollRegion } from '../../../components/ScrollRegion';
import type { KeyboardEvent } from 'react';
import { DateTime } from '../../../components/DateTime';
import type { AuditEventSummary } from '../api';
import { ColumnHead } from './ColumnHead';
import { recordText } from './labels';

/** The columns after the time: key and heading. */
const HEADS = [
  ['user', 'User'],
  ['action', 'Action'],
  ['record', 'Record'],
  ['reason', 'Reason'],
] as const;

export interface AuditTableProps {
  events: AuditEventSummary[];
  sort: 'asc' | 'desc';
  onSort: (s: 'asc' | 'desc') => void;
  onOpen: (id: number) => void;
  selectedId: number | null;
  timeZone: string;
}

export function AuditTable({ events, sort, onSort, onOpen, selectedId, timeZone }: AuditTableProps) {
  const onKey = (e: KeyboardEvent<HTMLTableRowElement>, id: number) => {
    if (e.key === 'Enter' || e.key === ' ') {
      e.preventDefault();
      onOpen(id);
    } else if (e.key === 'ArrowDown' || e.key === 'ArrowUp') {
      e.preventDefault();
      (
        (e.key === 'ArrowDown'
          ? e.currentTarget.nextElementSibling
          : e.currentTarget.previousElementSibling) as HTMLElement | null
      )?.focus();
    }
  };
  return (
    <ScrollRegion label="Audit events">
      <table className="w-full border-collapse text-sm" aria-label="Audit events">
        <thead className="bg-paper">
          <tr className="border-b border-line text-left">
            <ColumnHead column="event" className="text-right">
              Event
            </ColumnHead>
            <ColumnHead
              column="time"
              aria-sort={sort === 'asc' ? 'ascending' : 'descending'}
              className="whitespace-nowrap"
            >
              <button
                type="button"
                onClick={() => onSort(sort === 'asc' ? 'desc' : 'asc')}
                className="inline-flex items-center font-semibold hover:text-petrol"
                title="Turn the order"
              >
                Time ({timeZone})
                <span aria-hidden className="ml-1 text-xs text-petrol">
                  {sort === 'asc' ? '▲' : '▼'}
                </span>
                <span className="sr-only">{sort === 'asc' ? ', oldest first' : ', newest first'}</span>
              </button>
            </ColumnHead>
            {HEADS.map(([column, words]) => (
              <ColumnHead key={column} column={column}>
                {words}
              </ColumnHead>
            ))}
          </tr>
        </thead>
        <tbody>
          {events.map((e) => (
            <tr
              key={e.id}
              tabIndex={0}
              onClick={() => onOpen(e.id)}
              onKeyDown={(k) => onKey(k, e.id)}
              aria-selected={selectedId === e.id}
              className={`cursor-pointer border-b border-line last:border-b-0 hover:bg-petrol-soft/60 focus:bg-petrol-soft focus:outline-none ${selectedId === e.id ? 'bg-petrol-soft' : ''}`}
              data-testid="audit-row"
            >
              <td className="px-3 py-1.5 text-right align-top tabular-nums">{e.id}</td>
              <td className="px-3 py-1.5 align-top">
                <DateTime value={e.occurredAt} seconds />
              </td>
              <td className="px-3 py-1.5 align-top">
                {e.actorName}
                {e.actorUsername && <span className="block text-xs text-muted">{e.actorUsername}</span>}
              </td>
              <td className="px-3 py-1.5 align-top" data-testid="audit-action">
                {e.actionWords}
                <span className="block font-mono text-xs break-all text-muted">{e.action}</span>
              </td>
              <td className="px-3 py-1.5 align-top break-words" data-testid="audit-record">
                {recordText(e.entityType, e.entityId, e.recordNumber)}
              </td>
              <td className="max-w-[22rem] truncate px-3 py-1.5 align-top" title={e.reason ?? undefined}>
                {e.reason ?? <span className="text-muted">—</span>}
              </td>
            </tr>
          ))}
        </tbody>
      </table>
    </ScrollRegion>
  );
}
