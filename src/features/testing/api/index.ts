/** Hooks of receipt, testing and verification (the only place this feature talks to the server). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch, apiUpload, downloadUrl, type UploadProgress } from '../../../lib/api';
import { invalidateMe } from '../../../lib/query-keys';
import type { SignatureInput } from '../../../../server/lib/contract';
import type { LotCreate, LotDetail, LotSummary, ReceivableMaterial } from '../../../../server/modules/lots/contract';
import type {
  InstrumentStatus,
  MatchRow,
  MeasurementDetail,
  MeasurementPlotData,
  QueueTest,
  ReviewData,
  StartedTest,
  TestDetail,
  UploadResult,
  VerifyOutcome,
  WorkQueue,
} from '../../../../server/modules/testing/contract';

export type { SignatureRecord as Signature } from '../../../../server/lib/contract';
export type {
  LotContainer,
  LotDetail,
  LotSummary,
  LotTestSummary,
  MeasurementVerdict as Verdict3,
  ReceivableMaterial,
} from '../../../../server/modules/lots/contract';
export type {
  BandRow,
  Criterion,
  HintEntry,
  InstrumentStatus,
  MatchRow,
  MeasurementDetail,
  MeasurementPlotData,
  MeasurementSummary,
  QueueTest,
  ReviewData,
  StoredResult,
  TestDetail,
  TestStatus,
  UploadResult,
  VerifyOutcome,
  WorkQueue,
} from '../../../../server/modules/testing/contract';
/** The signature part of a request body. */
export type SignatureBody = SignatureInput;

const K = {
  lots: ['lots'] as const,
  lot: (id: number) => ['lots', id] as const,
  receivable: ['lots', 'receivable'] as const,
  instruments: ['testing', 'instruments'] as const,
  test: (id: number) => ['tests', id] as const,
  review: (id: number) => ['tests', id, 'review'] as const,
  measurement: (id: number) => ['measurements', id] as const,
  plot: (id: number) => ['measurements', id, 'plot'] as const,
  queue: ['verification', 'queue'] as const,
  workQueue: ['work-queue'] as const,
};

export const useReceivableMaterials = () =>
  useQuery({ queryKey: K.receivable, queryFn: () => apiFetch<ReceivableMaterial[]>('/api/lots/receivable-materials') });
export const useLots = (f: { identityStatus?: string; search?: string } = {}) =>
  useQuery({ queryKey: [...K.lots, f], queryFn: () => apiFetch<LotSummary[]>('/api/lots', { query: f }) });
export const useLot = (id: number) =>
  useQuery({ queryKey: K.lot(id), queryFn: () => apiFetch<LotDetail>(`/api/lots/${id}`), enabled: id > 0 });
export const useTestingInstruments = () =>
  useQuery({ queryKey: K.instruments, queryFn: () => apiFetch<InstrumentStatus[]>('/api/testing/instruments') });
export const useTest = (id: number | null) =>
  useQuery({ queryKey: K.test(id ?? 0), queryFn: () => apiFetch<TestDetail>(`/api/tests/${id}`), enabled: !!id });
export const useReview = (id: number) =>
  useQuery({ queryKey: K.review(id), queryFn: () => apiFetch<ReviewData>(`/api/tests/${id}/review`) });
export const useMeasurement = (id: number | null) =>
  useQuery({
    queryKey: K.measurement(id ?? 0),
    queryFn: () => apiFetch<MeasurementDetail>(`/api/measurements/${id}`),
    enabled: !!id,
  });
export const useMeasurementPlot = (id: number | null) =>
  useQuery({
    queryKey: K.plot(id ?? 0),
    queryFn: () => apiFetch<MeasurementPlotData>(`/api/measurements/${id}/plot`),
    enabled: !!id,
    staleTime: Infinity,
  });
export const useVerificationQueue = () =>
  useQuery({ queryKey: K.queue, queryFn: () => apiFetch<QueueTest[]>('/api/verification/queue') });
export const useWorkQueue = () =>
  useQuery({ queryKey: K.workQueue, queryFn: () => apiFetch<WorkQueue>('/api/work-queue') });

export const labelsPdfUrl = (lotId: number) => downloadUrl(`/api/lots/${lotId}/labels.pdf`);
export const rawFileUrl = (measurementId: number) => downloadUrl(`/api/measurements/${measurementId}/file`);

export function useReceiveLot() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: LotCreate) => apiFetch<LotDetail>('/api/lots', { method: 'POST', body }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: K.lots });
      void qc.invalidateQueries({ queryKey: K.workQueue });
    },
  });
}

function useLotRefresh() {
  const qc = useQueryClient();
  return (lotId: number, testId?: number | null) => {
    void qc.invalidateQueries({ queryKey: K.lot(lotId) });
    void qc.invalidateQueries({ queryKey: K.lots });
    void qc.invalidateQueries({ queryKey: K.workQueue });
    if (testId) void qc.invalidateQueries({ queryKey: K.test(testId) });
  };
}

export function useStartTest(lotId: number) {
  const refresh = useLotRefresh();
  return useMutation({
    mutationFn: (instrumentId: number) =>
      apiFetch<StartedTest>(`/api/lots/${lotId}/tests`, { method: 'POST', body: { instrumentId } }),
    onSuccess: (t) => refresh(lotId, t.id),
  });
}

export function useSwitchInstrument(lotId: number, testId: number) {
  const refresh = useLotRefresh();
  return useMutation({
    mutationFn: (instrumentId: number) =>
      apiFetch<TestDetail>(`/api/tests/${testId}/instrument`, { method: 'PUT', body: { instrumentId } }),
    onSuccess: () => refresh(lotId, testId),
  });
}

export function useMatchFiles(testId: number) {
  return useMutation({
    mutationFn: (fileNames: string[]) =>
      apiFetch<MatchRow[]>(`/api/tests/${testId}/match-files`, { method: 'POST', body: { fileNames } }),
  });
}

/** Uploads the spectrum of one container, with progress; rejects with the server's sentence. */
export function uploadMeasurement(
  testId: number,
  target: { containerId?: number; label?: string },
  file: File,
  onProgress?: (p: UploadProgress) => void,
) {
  const fd = new FormData();
  if (target.containerId) fd.append('containerId', String(target.containerId));
  if (target.label) fd.append('label', target.label);
  fd.append('file', file, file.name);
  return apiUpload<UploadResult>(`/api/tests/${testId}/measurements`, fd, onProgress);
}

/** Call after uploads to refresh the lot and test views. */
export function useAfterUpload(lotId: number, testId: number) {
  const refresh = useLotRefresh();
  return () => refresh(lotId, testId);
}

export function usePerform(lotId: number, testId: number) {
  const qc = useQueryClient();
  const refresh = useLotRefresh();
  return useMutation({
    mutationFn: (signature: SignatureBody) =>
      apiFetch<TestDetail>(`/api/tests/${testId}/perform`, { method: 'POST', body: { signature } }),
    onSuccess: () => {
      refresh(lotId, testId);
      void invalidateMe(qc);
    },
  });
}

function useDecisionRefresh(testId: number) {
  const qc = useQueryClient();
  return () => {
    void qc.invalidateQueries({ queryKey: ['tests', testId] });
    void qc.invalidateQueries({ queryKey: K.queue });
    void qc.invalidateQueries({ queryKey: K.lots });
    void qc.invalidateQueries({ queryKey: K.workQueue });
    void qc.invalidateQueries({ queryKey: ['investigations'] });
    void invalidateMe(qc);
  };
}

export function useVerify(testId: number) {
  const done = useDecisionRefresh(testId);
  return useMutation({
    mutationFn: (body: { signature: SignatureBody; comment?: string }) =>
      apiFetch<VerifyOutcome>(`/api/tests/${testId}/verify`, {
        method: 'POST',
        body,
      }),
    onSuccess: done,
  });
}

export function useReturnTest(testId: number) {
  const done = useDecisionRefresh(testId);
  return useMutation({
    mutationFn: (body: { signature: SignatureBody; reason: string }) =>
      apiFetch<TestDetail>(`/api/tests/${testId}/return`, { method: 'POST', body }),
    onSuccess: done,
  });
}
