/** Hooks of QA's master data: the sources of each material with their qualification status, and the material master (the only place this feature talks to the server). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type { SourceRecord, SourceStatusInput } from '../../../../server/modules/suppliers/contract';
import type { MaterialProfileView, ProfileInput } from '../../../../server/modules/disposition/contract';

export {
  SAMPLING_PLANS,
  SAMPLING_PLAN_LABELS,
  SOURCE_STATUSES,
  SOURCE_STATUS_LABELS,
  sourceStatusSchema,
} from '../../../../server/modules/suppliers/contract';
export {
  CHECK_KINDS,
  CHECK_KIND_LABELS,
  RISK_CLASSES,
  RISK_CLASS_LABELS,
  profileSchema,
} from '../../../../server/modules/disposition/contract';
export type { SourceRecord, SourceStatusInput, MaterialProfileView, ProfileInput };

export const useSources = () =>
  useQuery({ queryKey: qk.suppliers.sources(null), queryFn: () => apiFetch<SourceRecord[]>('/api/sources') });

export const useProfiles = () =>
  useQuery({
    queryKey: qk.disposition.profiles,
    queryFn: () => apiFetch<MaterialProfileView[]>('/api/material-profiles'),
  });

export function useSetSourceStatus() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (b: { sourceId: number; body: SourceStatusInput }) =>
      apiFetch<SourceRecord>(`/api/sources/${b.sourceId}/status`, { method: 'POST', body: b.body }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: qk.suppliers.all });
      void invalidateMe(qc);
    },
  });
}

export function useSaveProfile() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (b: { materialId: number; body: ProfileInput }) =>
      apiFetch<MaterialProfileView>(`/api/material-profiles/${b.materialId}`, { method: 'POST', body: b.body }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: qk.disposition.all });
      void invalidateMe(qc);
    },
  });
}
