/** Audit trail hooks: the browser's pages, one event, filter choices, the chain check, record history, export links. */
import { keepPreviousData, useMutation, useQuery } from '@tanstack/react-query';
import { apiFetch, downloadUrl } from '../../../lib/api';
import { qk } from '../../../lib/query-keys';
import type {
  AuditEventDetail,
  AuditEventSummary,
  AuditFacets,
  AuditFilter,
  AuditPage,
  RecordHistory,
} from '../../../../server/modules/audit/contract';
import type { ChainReport, ChainRun } from '../../../../server/lib/contract';

export type {
  AuditEventDetail,
  AuditEventSummary,
  AuditFacets,
  AuditPage,
  RecordHistory,
  FieldChange,
} from '../../../../server/modules/audit/contract';
export type { ChainReport, SignatureRecord as SignatureOnRecord } from '../../../../server/lib/contract';
export { COUNT_CAP, PDF_ROW_CAP, HISTORY_CAP, TEXT_WINDOW } from '../../../../server/modules/audit/contract';

/** The filter as the API takes it (instants in UTC, sort). */
export type AuditQuery = Partial<AuditFilter>;

function clean(q: AuditQuery): Record<string, string | number> {
  const out: Record<string, string | number> = {};
  for (const [k, v] of Object.entries(q)) if (v !== undefined && v !== null && v !== '') out[k] = v as string | number;
  return out;
}

/**
 * A text search reads the trail one window per request (each request stays fast); for a full
 * page this follows the cursor for up to TEXT_SEARCH_BUDGET_MS and then says how far it got.
 */
const TEXT_SEARCH_BUDGET_MS = 3000;

async function fetchPage(
  q: AuditQuery,
  cursor: string | null,
  limit: number,
  signal?: AbortSignal,
): Promise<AuditPage> {
  const started = Date.now();
  let page = await apiFetch<AuditPage>('/api/audit/events', {
    query: { ...clean(q), limit, ...(cursor ? { cursor } : {}) },
    signal,
  });
  if (!q.q) return page;
  const events: AuditEventSummary[] = [...page.events];
  while (
    events.length < limit &&
    page.nextCursor &&
    !page.search?.complete &&
    Date.now() - started < TEXT_SEARCH_BUDGET_MS
  ) {
    page = await apiFetch<AuditPage>('/api/audit/events', {
      query: { ...clean(q), limit: limit - events.length, cursor: page.nextCursor },
      signal,
    });
    events.push(...page.events);
  }
  return { ...page, events, limit };
}

export function useAuditEvents(q: AuditQuery, cursor: string | null, limit = 50) {
  return useQuery({
    queryKey: qk.audit.events(clean(q), cursor, limit),
    queryFn: ({ signal }) => fetchPage(q, cursor, limit, signal),
    placeholderData: keepPreviousData,
  });
}

export function useAuditEvent(id: number | null) {
  return useQuery({
    queryKey: qk.audit.event(id),
    queryFn: () => apiFetch<AuditEventDetail>(`/api/audit/events/${id}`),
    enabled: id !== null,
  });
}

export function useAuditFacets() {
  return useQuery({
    queryKey: qk.audit.facets,
    queryFn: () => apiFetch<AuditFacets>('/api/audit/facets'),
    staleTime: 60_000,
  });
}

/** The chain check runs only when asked (it reads every event). */
export function useChainCheck() {
  return useQuery({
    queryKey: qk.audit.chain,
    queryFn: () => apiFetch<ChainReport>('/api/audit/verify'),
    enabled: false,
    gcTime: Infinity,
    retry: false,
  });
}

/** Starts a full chain check (a background job on the server). */
export function useStartFullCheck() {
  return useMutation({
    mutationFn: () => apiFetch<ChainRun>('/api/audit/verify/full', { method: 'POST' }),
  });
}

/** Polls a full chain check every second until it has finished or failed. */
export function useFullCheckRun(id: number | null) {
  return useQuery({
    queryKey: qk.audit.fullCheck(id),
    queryFn: () => apiFetch<ChainRun>(`/api/audit/verify/full/${id}`),
    enabled: id !== null,
    refetchInterval: (q) => (q.state.data && ['finished', 'failed'].includes(q.state.data.status) ? false : 1000),
  });
}

export function useRecordHistory(entityType: string, entityId: string | number, enabled: boolean) {
  return useQuery({
    queryKey: qk.audit.history(entityType, String(entityId)),
    queryFn: () =>
      apiFetch<RecordHistory>(`/api/history/${encodeURIComponent(entityType)}/${encodeURIComponent(String(entityId))}`),
    enabled,
  });
}

export function exportUrl(kind: 'csv' | 'pdf', q: AuditQuery): string {
  return downloadUrl(`/api/audit/export.${kind}`, clean(q));
}
