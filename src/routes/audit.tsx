/**
 * The audit trail browser (auditors and QA: every event; administrators: account and sign-in
 * events). Filters live in the address (a filtered view can be bookmarked or linked, e.g. from a
 * record's history); pages follow the server's cursor; an event opens beside the table with its
 * values before and after side by side. Exports (CSV, PDF) and the chain check are here too.
 */
import { useMemo, useState } from 'react';
import { useSearchParams } from 'react-router-dom';
import { useSession } from '../app/session';
import { Button, buttonClass } from '../components/Button';
import { EmptyState } from '../components/EmptyState';
import { ErrorNote } from '../components/ErrorNote';
import { PageHeader } from '../components/PageHeader';
import { formatDateTime, formatNumber } from '../lib/format';
import { hasAnyRole } from '../lib/roles';
import { COUNT_CAP, PDF_ROW_CAP, TEXT_WINDOW, exportUrl, useAuditEvents, type AuditQuery } from '../features/audit/api';
import { AuditFilters, type FilterForm } from '../features/audit/components/AuditFilters';
import { AuditTable } from '../features/audit/components/AuditTable';
import { ChainCheckPanel } from '../features/audit/components/ChainCheckPanel';
import { Drawer } from '../features/audit/components/Drawer';
import { EventDetail } from '../features/audit/components/EventDetail';
import { dayRangeToUtc } from '../features/audit/time';

const PAGE_SIZE = 50;
const KEYS: (keyof FilterForm)[] = ['fromDay', 'toDay', 'actorId', 'action', 'entityType', 'entityId', 'q'];

function zoneName(tz: string): string {
  const p = new Intl.DateTimeFormat('en-GB', { timeZone: tz, timeZoneName: 'long' })
    .formatToParts(new Date())
    .find((x) => x.type === 'timeZoneName');
  return p ? `${tz}, ${p.value}` : tz;
}

export default function AuditPage() {
  const { user, site } = useSession();
  const tz = site.timeZone;
  const accountsOnly = !hasAnyRole(user.roles, ['auditor', 'qa_manager']);
  const [params, setParams] = useSearchParams();
  const form: FilterForm = useMemo(
    () => Object.fromEntries(KEYS.map((k) => [k, params.get(k) ?? ''])) as unknown as FilterForm,
    [params],
  );
  const sort: 'asc' | 'desc' = params.get('sort') === 'asc' ? 'asc' : 'desc';
  const openId = params.get('event') ? Number(params.get('event')) : null;

  const query: AuditQuery = useMemo(
    () => ({
      ...dayRangeToUtc(form.fromDay || undefined, form.toDay || undefined, tz),
      actorId: form.actorId ? Number(form.actorId) : undefined,
      action: form.action || undefined,
      entityType: form.entityType || undefined,
      entityId: form.entityId || undefined,
      q: form.q || undefined,
      sort,
    }),
    [form, sort, tz],
  );
  const filterKey = JSON.stringify(query);
  const [pages, setPages] = useState<{ key: string; cursors: (string | null)[] }>({ key: filterKey, cursors: [null] });
  const cursors = pages.key === filterKey ? pages.cursors : [null];
  const cursor = cursors[cursors.length - 1];
  const events = useAuditEvents(query, cursor, PAGE_SIZE);

  const update = (changes: Record<string, string | null>) => {
    const next = new URLSearchParams(params);
    for (const [k, v] of Object.entries(changes)) {
      if (v === null || v === '') next.delete(k);
      else next.set(k, v);
    }
    setParams(next, { replace: false });
  };
  const applyFilter = (f: FilterForm) => update({ ...Object.fromEntries(KEYS.map((k) => [k, f[k]])), event: null });
  const pageNo = cursors.length;
  const data = events.data;
  const first = (pageNo - 1) * PAGE_SIZE + 1;
  const isFiltered = KEYS.some((k) => form[k] !== '');

  return (
    <div className="max-w-7xl">
      <PageHeader
        title="Audit trail"
        subtitle={
          <>
            Who did what, when and why. Times in the site time zone{' '}
            <strong className="font-medium text-ink">{zoneName(tz)}</strong>; events are stored in UTC (hover a time to
            see it).
          </>
        }
        actions={
          <>
            <a className={buttonClass('secondary')} href={exportUrl('csv', query)} download data-testid="export-csv">
              Export CSV
            </a>
            <a className={buttonClass('secondary')} href={exportUrl('pdf', query)} download data-testid="export-pdf">
              PDF report
            </a>
          </>
        }
      />
      <p className="-mt-3 mb-4 text-xs text-muted">
        CSV: every event that matches the filter, times in UTC, with the hash chain. PDF: a report of the first{' '}
        {formatNumber(PDF_ROW_CAP)} events with the filter stated. Each export is itself recorded in the audit trail.
      </p>
      {accountsOnly && (
        <p className="mb-4 rounded-md border border-line bg-white px-3 py-2 text-sm" role="note">
          As administrator you see the account and sign-in events. The full trail is open to auditors and QA managers.
        </p>
      )}

      <div className="flex flex-col gap-4">
        <ChainCheckPanel onShowEvent={(id) => update({ event: String(id) })} />
        <AuditFilters value={form} onApply={applyFilter} timeZone={tz} accountsOnly={accountsOnly} />

        {events.isError ? (
          <ErrorNote error={events.error} onRetry={() => void events.refetch()} />
        ) : !data ? (
          <p className="text-muted" role="status">
            Loading events…
          </p>
        ) : (
          <section aria-labelledby="events-title" className="flex flex-col gap-2">
            <div className="flex flex-wrap items-baseline gap-x-4 gap-y-1">
              <h2 id="events-title" className="text-lg">
                Events
              </h2>
              <p className="text-sm text-muted" aria-live="polite" data-testid="result-summary">
                {data.events.length === 0
                  ? 'No event on this page.'
                  : `Showing ${formatNumber(first)}–${formatNumber(first + data.events.length - 1)}`}
                {data.total &&
                  (data.total.exact
                    ? ` of ${formatNumber(data.total.count)}`
                    : ` of more than ${formatNumber(COUNT_CAP)} (counting stops at ${formatNumber(COUNT_CAP)} to keep the trail fast)`)}
                {data.search &&
                  (data.search.complete
                    ? ' · text search finished'
                    : ` · text search reached ${formatDateTime(data.search.searchedTo, { seconds: true })}; “Next page” searches on (the reason is searched ${formatNumber(TEXT_WINDOW)} events at a time and not counted)`)}
                {events.isFetching && ' · updating…'}
              </p>
            </div>
            {data.events.length === 0 && !data.nextCursor ? (
              <EmptyState title={isFiltered ? 'No event matches this filter.' : 'The audit trail is empty.'}>
                {isFiltered && 'Widen the date range or clear a filter.'}
              </EmptyState>
            ) : (
              <AuditTable
                events={data.events}
                sort={sort}
                onSort={(s) => update({ sort: s === 'desc' ? null : s })}
                onOpen={(id) => update({ event: String(id) })}
                selectedId={openId}
                timeZone={tz}
              />
            )}
            <nav aria-label="Pages" className="flex flex-wrap items-center gap-2">
              <Button
                disabled={pageNo <= 1 || events.isFetching}
                onClick={() => setPages({ key: filterKey, cursors: cursors.slice(0, -1) })}
              >
                Previous page
              </Button>
              <span className="text-sm text-muted tabular-nums">Page {pageNo}</span>
              <Button
                disabled={!data.nextCursor || events.isFetching}
                onClick={() => setPages({ key: filterKey, cursors: [...cursors, data.nextCursor] })}
              >
                Next page
              </Button>
              {pageNo > 1 && (
                <Button variant="quiet" onClick={() => setPages({ key: filterKey, cursors: [null] })}>
                  Back to the first page
                </Button>
              )}
            </nav>
          </section>
        )}
      </div>

      <Drawer
        open={openId !== null}
        onClose={() => update({ event: null })}
        title={`Audit event ${openId ?? ''}`}
        subtitle="Values before and after, side by side"
        wide
      >
        {openId !== null && (
          <EventDetail
            key={openId}
            id={openId}
            onShowRecord={(entityType, entityId) =>
              update({
                ...Object.fromEntries(KEYS.map((k) => [k, null])),
                entityType,
                entityId,
                sort: 'asc',
                event: null,
              })
            }
          />
        )}
      </Drawer>
    </div>
  );
}
