/** Instrument registry hooks: instruments, check specifications, polystyrene instrument checks. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch, apiUpload, downloadUrl, type UploadProgress } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type { SignatureInput } from '../../../../server/lib/contract';
import type {
  AcquisitionEntry,
  AssignAcquisitionInput,
  IntakeSettingInput,
  IntakeSettingView,
  TestAcquisitionsView,
} from '../../../../server/modules/intake/contract';
import type {
  CheckType,
  ImpactAssessment,
  ImpactDecisionInput,
  ImpactNotice,
  MaintenanceInput,
  QualificationInput,
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
  CheckType,
  ImpactAssessment,
  ImpactNotice,
  CheckResult,
  CheckSpecView as CheckSpec,
  InstrumentCheckView as InstrumentCheck,
  InstrumentCreateInput,
  InstrumentDetail,
  InstrumentListItem,
  PolystyreneBandResult,
  SpecCreateInput,
  SpecKind,
} from '../../../../server/modules/instruments/contract';
export {
  CHECK_TYPE_LABELS,
  MAINTENANCE_KINDS,
  QUALIFICATION_STAGE_LABELS,
  QUALIFICATION_STAGES,
  QUALIFICATION_STATUSES,
  isPolystyreneResult,
} from '../../../../server/modules/instruments/contract';

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
      checkType,
      file,
      signature,
      onProgress,
    }: {
      id: number;
      checkType: CheckType;
      file: File;
      signature: SignatureInput;
      onProgress: (p: UploadProgress) => void;
    }) => {
      const fd = new FormData();
      fd.append('file', file, file.name);
      fd.append('checkType', checkType);
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

/** A change to one instrument that answers with the instrument: refreshes the registry and the work queue. */
function useInstrumentChange<V extends { id: number }>(path: string, body: (v: V) => unknown) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: V) =>
      apiFetch<InstrumentDetail>(`/api/instruments/${v.id}/${path}`, { method: 'POST', body: body(v) }),
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: qk.instruments.all });
      await invalidateMe(qc);
    },
  });
}

export const useOutOfService = () =>
  useInstrumentChange<{ id: number; reason: string }>('out-of-service', ({ reason }) => ({ reason }));
export const useBackInService = () =>
  useInstrumentChange<{ id: number; reason: string; signature: SignatureInput }>(
    'back-in-service',
    ({ id: _id, ...b }) => b,
  );
export const useRecordMaintenance = () =>
  useInstrumentChange<MaintenanceInput & { id: number }>('maintenance', ({ id: _id, ...b }) => b);
export const useRecordQualification = () =>
  useInstrumentChange<QualificationInput & { id: number }>('qualifications', ({ id: _id, ...b }) => b);

export function useImpactAssessments() {
  return useQuery({
    queryKey: qk.instruments.impacts,
    queryFn: () => apiFetch<ImpactAssessment[]>('/api/impact-assessments'),
  });
}

export function useDecideImpact() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, ...body }: ImpactDecisionInput & { id: number }) =>
      apiFetch<ImpactAssessment>(`/api/impact-assessments/${id}/decision`, { method: 'POST', body }),
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: qk.instruments.all });
      await invalidateMe(qc);
    },
  });
}

/** Notices of failed instrument checks on a lot and its certificates. */
export function useLotNotices(lotId: number) {
  return useQuery({
    queryKey: qk.instruments.lotNotices(lotId),
    queryFn: () => apiFetch<ImpactNotice[]>(`/api/lots/${lotId}/impact-notices`),
  });
}

// ---- export-folder intake (docs/instrument-intake.md)

export type {
  AcquisitionEntry,
  IntakeSettingInput,
  IntakeSettingView,
  TestAcquisitionsView,
} from '../../../../server/modules/intake/contract';
export { ACQUISITION_STATE_LABELS } from '../../../../server/modules/intake/contract';

export function useIntakeSetting(id: number) {
  return useQuery({
    queryKey: qk.instruments.intake(id),
    queryFn: () => apiFetch<IntakeSettingView>(`/api/instruments/${id}/intake`),
  });
}

export function useSetIntake(id: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: IntakeSettingInput) =>
      apiFetch<IntakeSettingView>(`/api/instruments/${id}/intake`, { method: 'PUT', body }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: qk.instruments.intake(id) }),
  });
}

/** Files received from the folder; refreshed every few seconds while the page is open (files arrive on their own). */
export function useAcquisitions(id: number, enabled = true) {
  return useQuery({
    queryKey: qk.instruments.acquisitions(id),
    queryFn: () => apiFetch<AcquisitionEntry[]>(`/api/instruments/${id}/acquisitions`, { query: { state: 'all' } }),
    refetchInterval: 3000,
    enabled,
  });
}

export function useAssignAcquisition(instrumentId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, ...body }: AssignAcquisitionInput & { id: number }) =>
      apiFetch<{ id: number }>(`/api/acquisitions/${id}/assign`, { method: 'POST', body }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: qk.instruments.acquisitions(instrumentId) }),
  });
}

export function useNotASample(instrumentId: number) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, reason }: { id: number; reason: string }) =>
      apiFetch<{ ok: true }>(`/api/acquisitions/${id}/not-a-sample`, { method: 'POST', body: { reason } }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: qk.instruments.acquisitions(instrumentId) }),
  });
}

/** Every acquisition on a test's instrument during the test window (the review and the bench). */
export function useTestAcquisitions(testId: number, live = false) {
  return useQuery({
    queryKey: qk.instruments.testAcquisitions(testId),
    queryFn: () => apiFetch<TestAcquisitionsView>(`/api/tests/${testId}/acquisitions`),
    refetchInterval: live ? 3000 : false,
  });
}
