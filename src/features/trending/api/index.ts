/** Trending: charts, signals, acknowledgement, baselines, scans and the review exceptions of a test. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch, withQuery } from '../../../lib/api';
import { qk } from '../../../lib/query-keys';
import type {
  AcknowledgeInput,
  QaOverview,
  BaselineInput,
  ChartResponse,
  Metric,
  ReviewExceptions,
  ScanReport,
  ScopeKind,
  TrendBaseline,
  TrendMethodOption,
  TrendSignal,
} from '../../../../server/modules/trending/contract';
import type { SignatureInput } from '../../../../server/lib/contract';
import type { InvestigationDetail } from '../../../../server/modules/investigations/contract';

export type {
  QaOverview,
  RateRow,
  ChartResponse,
  Metric,
  ReviewExceptions,
  ScopeKind,
  TrendMethodOption,
  TrendSignal,
} from '../../../../server/modules/trending/contract';
export {
  EXCEPTION_LABELS,
  METRIC_LABELS,
  METRICS,
  SCOPE_LABELS,
  TREND_CAUTION,
} from '../../../../server/modules/trending/contract';

export interface ChartFilter {
  methodId: number;
  metric: Metric;
  scope: ScopeKind;
  value: string;
}

export function chartPath(f: ChartFilter, csv = false): string {
  return withQuery(csv ? '/api/trending/chart.csv' : '/api/trending/chart', {
    methodId: f.methodId,
    metric: f.metric,
    scope: f.scope,
    value: f.scope === 'all' ? '' : f.value,
  });
}

export function useTrendMethods() {
  return useQuery({
    queryKey: qk.trending.methods,
    queryFn: () => apiFetch<TrendMethodOption[]>('/api/trending/methods'),
  });
}

export function useChart(f: ChartFilter | null) {
  return useQuery({
    queryKey: qk.trending.chart(f ?? {}),
    queryFn: () => apiFetch<ChartResponse>(chartPath(f!)),
    enabled: !!f && (f.scope === 'all' || f.value !== ''),
  });
}

export function useSignals(status: 'open' | 'all') {
  return useQuery({
    queryKey: qk.trending.signals(status),
    queryFn: () => apiFetch<TrendSignal[]>(`/api/trending/signals?status=${status}`),
  });
}

export function useSignal(id: number) {
  return useQuery({
    queryKey: qk.trending.signal(id),
    queryFn: () => apiFetch<TrendSignal>(`/api/trending/signals/${id}`),
  });
}

export function useAcknowledge(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: AcknowledgeInput) =>
      apiFetch<TrendSignal>(`/api/trending/signals/${id}/acknowledge`, { method: 'POST', body }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: qk.trending.all }),
  });
}

export function useOpenInvestigation(signalId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: { reason: string; signature: SignatureInput }) =>
      apiFetch<InvestigationDetail>(`/api/trending/signals/${signalId}/investigation`, { method: 'POST', body }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: qk.trending.all });
      void qc.invalidateQueries({ queryKey: qk.investigations.all });
      void qc.invalidateQueries({ queryKey: qk.workQueue });
    },
  });
}

export function useScan() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => apiFetch<ScanReport>('/api/trending/scans', { method: 'POST', body: {} }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: qk.trending.all }),
  });
}

export function useFixBaseline() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: BaselineInput) => apiFetch<TrendBaseline>('/api/trending/baselines', { method: 'POST', body }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: qk.trending.all }),
  });
}

export function useReviewExceptions(testId: number) {
  return useQuery({
    queryKey: qk.trending.exceptions(testId),
    queryFn: () => apiFetch<ReviewExceptions>(`/api/tests/${testId}/exceptions`),
  });
}

export function useQaOverview(from: string, to: string) {
  return useQuery({
    queryKey: qk.trending.overview(from, to),
    queryFn: () => apiFetch<QaOverview>(`/api/qa-overview?from=${from}&to=${to}`),
    enabled: /^\d{4}-\d{2}-\d{2}$/.test(from) && /^\d{4}-\d{2}-\d{2}$/.test(to) && from <= to,
  });
}
