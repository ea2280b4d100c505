/** Hooks of investigations of failing identity results. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch } from '../../../lib/api';
import { invalidateMe } from '../../../lib/query-keys';
import type { Phase1Item } from '../../../../server/modules/investigations/schemas';

export interface Signature {
  id: number;
  printedName: string;
  meaning: string;
  signedAt: string;
  contentHash: string;
  statement: string | null;
}

export interface FailingContainer {
  containerId: number;
  label: string;
  measurementId: number;
  score: number | null;
  explanation: string[];
  hint: { materialId: number; materialCode: string; materialName: string; referenceCode: string; score: number; isTestedMaterial: boolean }[];
  hintText: string;
}

export interface Phase1Record {
  items: Record<Phase1Item, { ok: boolean; note: string }>;
  summary: string;
  recordedBy: { id: number; name: string };
  recordedAt: string;
  signatureId: number;
}

export interface Investigation {
  id: number;
  number: string;
  lotId: number;
  lotNumber: string;
  materialName: string;
  testId: number;
  attempt: number;
  status: 'open' | 'phase1-recorded' | 'retest-authorised' | 'closed';
  decision: 'invalidated' | 'confirmed' | null;
  failing: FailingContainer[];
  phase1: Phase1Record | null;
  justification: string | null;
  retestContainerIds: number[];
  openedAt: string;
  decidedBy: { id: number; name: string } | null;
  closedAt: string | null;
  updatedAt: string;
}

export interface InvestigationDetail extends Investigation {
  signatures: Signature[];
  performedBy: number | null;
}

export type SignatureBody = { username?: string; password: string };

export const useInvestigations = (state: 'open' | 'all') =>
  useQuery({ queryKey: ['investigations', 'list', state], queryFn: () => apiFetch<Investigation[]>('/api/investigations', { query: { state } }) });
export const useInvestigation = (id: number) => useQuery({ queryKey: ['investigations', id], queryFn: () => apiFetch<InvestigationDetail>(`/api/investigations/${id}`) });

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
    mutationFn: (body: Record<Phase1Item, { ok: boolean; note: string }> & { summary: string; signature: SignatureBody }) =>
      apiFetch<InvestigationDetail>(`/api/investigations/${id}/phase1`, { method: 'POST', body }),
    onSuccess: done,
  });
}

export function useInvalidate(id: number) {
  const done = useDone(id);
  return useMutation({
    mutationFn: (body: { cause: Phase1Item; justification: string; retestContainerIds: number[]; signature: SignatureBody }) =>
      apiFetch<InvestigationDetail>(`/api/investigations/${id}/invalidate`, { method: 'POST', body }),
    onSuccess: done,
  });
}

export function useConfirm(id: number) {
  const done = useDone(id);
  return useMutation({
    mutationFn: (body: { justification: string; signature: SignatureBody }) => apiFetch<InvestigationDetail>(`/api/investigations/${id}/confirm`, { method: 'POST', body }),
    onSuccess: done,
  });
}
