/** Integrity alerts and sweeps (QA managers and auditors; QA signs alerts off). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type { IntegrityAlert, IntegrityRun, SignOffInput } from '../../../../server/modules/integrity/contract';

export type { IntegrityAlert, IntegrityRun, SignOffInput } from '../../../../server/modules/integrity/contract';

export function useAlerts(status: 'open' | 'all') {
  return useQuery({
    queryKey: qk.integrity.alerts(status),
    queryFn: () => apiFetch<IntegrityAlert[]>(`/api/integrity/alerts?status=${status}`),
  });
}

export function useAlert(id: number) {
  return useQuery({
    queryKey: qk.integrity.alert(id),
    queryFn: () => apiFetch<IntegrityAlert>(`/api/integrity/alerts/${id}`),
  });
}

export function useRuns() {
  return useQuery({
    queryKey: qk.integrity.runs,
    queryFn: () => apiFetch<IntegrityRun[]>('/api/integrity/runs'),
    // a running sweep reports progress: ask again every few seconds while one is queued or running
    refetchInterval: (q) =>
      (q.state.data ?? []).some((r) => r.status === 'queued' || r.status === 'running') ? 3000 : false,
  });
}

export function useRequestSweep() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => apiFetch<IntegrityRun>('/api/integrity/runs', { method: 'POST', body: {} }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: qk.integrity.all }),
  });
}

export function useSignOff(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: SignOffInput) =>
      apiFetch<IntegrityAlert>(`/api/integrity/alerts/${id}/sign-off`, { method: 'POST', body }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: qk.integrity.all });
      void invalidateMe(qc);
    },
  });
}
