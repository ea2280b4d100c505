/** Hooks of sampling, container status and QA disposition (the only place this feature talks to the server). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch, downloadUrl } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type { SignatureInput } from '../../../../server/lib/contract';
import type { LotSamplingView, SamplingInput } from '../../../../server/modules/sampling/contract';
import type { LotDispositionView } from '../../../../server/modules/disposition/contract';

export type { LotSamplingView, LotDispositionView };

export const useSampling = (lotId: number) =>
  useQuery({
    queryKey: [...qk.disposition.lot(lotId), 'sampling'],
    queryFn: () => apiFetch<LotSamplingView>(`/api/lots/${lotId}/sampling`),
  });

export const useDisposition = (lotId: number) =>
  useQuery({
    queryKey: [...qk.disposition.lot(lotId), 'decision'],
    queryFn: () => apiFetch<LotDispositionView>(`/api/lots/${lotId}/disposition`),
  });

export const statusLabelsUrl = (lotId: number, change?: number) =>
  downloadUrl(`/api/lots/${lotId}/status-labels.pdf`, change ? { change } : undefined);

function useRefresh(lotId: number) {
  const qc = useQueryClient();
  return () => {
    void qc.invalidateQueries({ queryKey: qk.disposition.lot(lotId) });
    void qc.invalidateQueries({ queryKey: qk.lots.all });
    void qc.invalidateQueries({ queryKey: qk.workQueue });
    void invalidateMe(qc);
  };
}

export function useLineClearance(lotId: number) {
  const refresh = useRefresh(lotId);
  return useMutation({
    mutationFn: (body: { area: string; previousUse: string | null; signature: SignatureInput }) =>
      apiFetch<LotSamplingView>(`/api/lots/${lotId}/line-clearance`, { method: 'POST', body }),
    onSuccess: refresh,
  });
}

export function useRecordSampling(lotId: number) {
  const refresh = useRefresh(lotId);
  return useMutation({
    mutationFn: (body: SamplingInput) =>
      apiFetch<LotSamplingView>(`/api/lots/${lotId}/sampling`, { method: 'POST', body }),
    onSuccess: refresh,
  });
}

export function useRecordCheck(lotId: number) {
  const refresh = useRefresh(lotId);
  return useMutation({
    mutationFn: (body: {
      checkKey: string;
      outcome: 'conforms' | 'does-not-conform';
      reference: string | null;
      signature: SignatureInput;
    }) => apiFetch<LotDispositionView>(`/api/lots/${lotId}/checks`, { method: 'POST', body }),
    onSuccess: refresh,
  });
}

export function useDecide(lotId: number) {
  const refresh = useRefresh(lotId);
  return useMutation({
    mutationFn: (b: { decision: 'release' | 'reject' | 'retest'; text: string; signature: SignatureInput }) =>
      apiFetch<LotDispositionView>(`/api/lots/${lotId}/${b.decision}`, {
        method: 'POST',
        body:
          b.decision === 'release'
            ? { comment: b.text || null, signature: b.signature }
            : { reason: b.text, signature: b.signature },
      }),
    onSuccess: refresh,
  });
}
