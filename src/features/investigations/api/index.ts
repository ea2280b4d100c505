/** Hooks of investigations of failing identity results. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch } from '../../../lib/api';
import { invalidateMe } from '../../../lib/query-keys';
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
} from '../../../../server/modules/investigations/contract';
/** The signature part of a request body. */
export type SignatureBody = SignatureInput;

export const useInvestigations = (state: 'open' | 'all') =>
  useQuery({
    queryKey: ['investigations', 'list', state],
    queryFn: () => apiFetch<Investigation[]>('/api/investigations', { query: { state } }),
  });
export const useInvestigation = (id: number) =>
  useQuery({
    queryKey: ['investigations', id],
    queryFn: () => apiFetch<InvestigationDetail>(`/api/investigations/${id}`),
  });

function useDone(id: number) {
  const qc = useQueryClient();
  return () => {
    void qc.invalidateQueries({ queryKey: ['investigations'] });
    void qc.invalidateQueries({ queryKey: ['lots'] });
    void qc.invalidateQueries({ queryKey: ['work-queue'] });
    void invalidateMe(qc);
    void id;
  };
}

export function usePhase1(id: number) {
  const done = useDone(id);
  return useMutation({
    mutationFn: (
      body: Record<Phase1Item, { ok: boolean; note: string }> & { summary: string; signature: SignatureBody },
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
      signature: SignatureBody;
    }) => apiFetch<InvestigationDetail>(`/api/investigations/${id}/invalidate`, { method: 'POST', body }),
    onSuccess: done,
  });
}

export function useConfirm(id: number) {
  const done = useDone(id);
  return useMutation({
    mutationFn: (body: { justification: string; signature: SignatureBody }) =>
      apiFetch<InvestigationDetail>(`/api/investigations/${id}/confirm`, { method: 'POST', body }),
    onSuccess: done,
  });
}
