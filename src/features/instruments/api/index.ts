/** Instrument registry hooks: instruments, check specifications, polystyrene instrument checks. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch, apiUpload, downloadUrl, type UploadProgress } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type { SignatureInput } from '../../../../server/lib/contract';
import type {
  InstrumentCheckView,
  InstrumentCreateInput,
  InstrumentDetail,
  InstrumentListItem,
  SpecCreateInput,
} from '../../../../server/modules/instruments/contract';

export type { SignatureRecord as Signature } from '../../../../server/lib/contract';
export type {
  CheckBand,
  AnyCheckResult,
  CheckResult,
  CheckSpecView as CheckSpec,
  InstrumentCheckView as InstrumentCheck,
  InstrumentCreateInput,
  InstrumentDetail,
  InstrumentListItem,
  PolystyreneBandResult,
  SpecKind,
} from '../../../../server/modules/instruments/contract';
export { CHECK_TYPE_LABELS, isPolystyreneResult } from '../../../../server/modules/instruments/contract';

export function useInstruments() {
  return useQuery({ queryKey: qk.instruments.all, queryFn: () => apiFetch<InstrumentListItem[]>('/api/instruments') });
}

export function useInstrument(id: number) {
  return useQuery({
    queryKey: qk.instruments.one(id),
    queryFn: () => apiFetch<InstrumentDetail>(`/api/instruments/${id}`),
  });
}

export function useCreateInstrument() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: InstrumentCreateInput) =>
      apiFetch<InstrumentDetail>('/api/instruments', { method: 'POST', body }),
    onSuccess: () => qc.invalidateQueries({ queryKey: qk.instruments.all }),
  });
}

export function useApproveSpec() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, ...body }: { id: number; spec: SpecCreateInput; signature: SignatureInput }) =>
      apiFetch<InstrumentDetail>(`/api/instruments/${id}/specs`, { method: 'POST', body }),
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: qk.instruments.all });
      await invalidateMe(qc);
    },
  });
}

/** Uploads the polystyrene film spectrum with the performer's signature; resolves to the stored check. */
export function useRecordCheck() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({
      id,
      file,
      signature,
      onProgress,
    }: {
      id: number;
      file: File;
      signature: SignatureInput;
      onProgress: (p: UploadProgress) => void;
    }) => {
      const fd = new FormData();
      fd.append('file', file, file.name);
      fd.append('password', signature.password);
      if (signature.username) fd.append('username', signature.username);
      return apiUpload<InstrumentCheckView>(`/api/instruments/${id}/checks`, fd, onProgress);
    },
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: qk.instruments.all });
      await invalidateMe(qc);
    },
  });
}

export const checkFileUrl = (instrumentId: number, checkId: number) =>
  downloadUrl(`/api/instruments/${instrumentId}/checks/${checkId}/file`);
