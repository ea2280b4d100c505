/** Hooks of investigations of failing identity results and of trend signals. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type { SignatureInput } from '../../../../server/lib/contract';
import type {
  InvestigationDetail,
  InvestigationSummary as Investigation,
  Phase1Item,
} from '../../../../server/modules/investigations/contract';

export type { SignatureRecord as Signature } from '../../../../server/lib/contract';
export type {
  FailingContainer,
  InvestigationDetail,
  InvestigationSummary as Investigation,
  Phase1Record,
  TrendSubject,
} from '../../../../server/modules/investigations/contract';

export const useInvestigations = (state: 'open' | 'all') =>
  useQuery({
    queryKey: qk.investigations.list(state),
    queryFn: () => apiFetch<Investigation[]>('/api/investigations', { query: { state } }),
  });
export const useInvestigation = (id: number) =>
  useQuery({
    queryKey: qk.investigations.one(id),
    queryFn: () => apiFetch<InvestigationDetail>(`/api/investigations/${id}`),
  });

function useDone(id: number) {
  const qc = useQueryClient();
  return () => {
    void qc.invalidateQueries({ queryKey: qk.investigations.all });
    void qc.invalidateQueries({ queryKey: qk.lots.all });
    void qc.invalidateQueries({ queryKey: qk.workQueue });
    void invalidateMe(qc);
    void id;
  };
}

export function usePhase1(id: number) {
  const done = useDone(id);
  return useMutation({
    mutationFn: (
      body: Record<Phase1Item, { ok: boolean; note: string }> & { summary: string; signature: SignatureInput },
    ) => apiFetch<InvestigationDetail>(`/api/investigations/${id}/phase1`, { method: 'POST', body }),
    onSuccess: done,
  });
}

export function useInvalidate(id: number) {
  const done = useDone(id);
  return useMutation({
    mutationFn: (body: {
      cause: Phase1Item;
      justification: string;
      retestContainerIds: number[];
      signature: SignatureInput;
    }) => apiFetch<InvestigationDetail>(`/api/investigations/${id}/invalidate`, { method: 'POST', body }),
    onSuccess: done,
  });
}

export function useConclude(id: number) {
  const done = useDone(id);
  return useMutation({
    mutationFn: (body: { conclusion: string; signature: SignatureInput }) =>
      apiFetch<InvestigationDetail>(`/api/investigations/${id}/conclude`, { method: 'POST', body }),
    onSuccess: done,
  });
}

export function useConfirm(id: number) {
  const done = useDone(id);
  return useMutation({
    mutationFn: (body: { justification: string; signature: SignatureInput }) =>
      apiFetch<InvestigationDetail>(`/api/investigations/${id}/confirm`, { method: 'POST', body }),
    onSuccess: done,
  });
}
