/** Hooks of receipt, testing and verification (the only place this feature talks to the server). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch, apiUpload, downloadUrl, type UploadProgress } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type { SignatureInput } from '../../../../server/lib/contract';
import type { LotCreate, LotDetail, LotSummary, ReceivableMaterial } from '../../../../server/modules/lots/contract';
import type { SourceRecord } from '../../../../server/modules/suppliers/contract';
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

import type {
  BlockedContainer,
  HandOverInput,
  OperatorChoice,
  ReviewMeasurementEntry,
} from '../../../../server/modules/provenance/contract';

export type { SignatureRecord as Signature } from '../../../../server/lib/contract';
export type { BlockedContainer, OperatorChoice, ReviewMeasurementEntry };
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

export const useReceivableMaterials = () =>
  useQuery({
    queryKey: qk.lots.receivable,
    queryFn: () => apiFetch<ReceivableMaterial[]>('/api/lots/receivable-materials'),
  });
export const useLots = (f: { identityStatus?: string; search?: string } = {}) =>
  useQuery({ queryKey: qk.lots.list(f), queryFn: () => apiFetch<LotSummary[]>('/api/lots', { query: f }) });
export const useLot = (id: number) =>
  useQuery({ queryKey: qk.lots.one(id), queryFn: () => apiFetch<LotDetail>(`/api/lots/${id}`), enabled: id > 0 });
export const useTestingInstruments = () =>
  useQuery({ queryKey: qk.tests.instruments, queryFn: () => apiFetch<InstrumentStatus[]>('/api/testing/instruments') });
export const useTest = (id: number | null) =>
  useQuery({ queryKey: qk.tests.one(id ?? 0), queryFn: () => apiFetch<TestDetail>(`/api/tests/${id}`), enabled: !!id });
export const useReview = (id: number) =>
  useQuery({ queryKey: qk.tests.review(id), queryFn: () => apiFetch<ReviewData>(`/api/tests/${id}/review`) });
export const useMeasurement = (id: number | null) =>
  useQuery({
    queryKey: qk.measurements.one(id ?? 0),
    queryFn: () => apiFetch<MeasurementDetail>(`/api/measurements/${id}`),
    enabled: !!id,
  });
export const useMeasurementPlot = (id: number | null) =>
  useQuery({
    queryKey: qk.measurements.plot(id ?? 0),
    queryFn: () => apiFetch<MeasurementPlotData>(`/api/measurements/${id}/plot`),
    enabled: !!id,
    staleTime: Infinity,
  });
export const useVerificationQueue = () =>
  useQuery({ queryKey: qk.tests.verificationQueue, queryFn: () => apiFetch<QueueTest[]>('/api/verification/queue') });
/** The work queue; `full` names one section to list whole (the others keep their first items). */
export const useWorkQueue = (full?: string) =>
  useQuery({
    queryKey: full ? [...qk.workQueue, full] : qk.workQueue,
    queryFn: () => apiFetch<WorkQueue>(full ? `/api/work-queue?full=${encodeURIComponent(full)}` : '/api/work-queue'),
  });

/** QA's retry of a certificate that could not be issued (the certificates module issues it). */
export function useRetryCertificate() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (lotId: number) =>
      apiFetch<{ number: string }>('/api/certificates/issue', { method: 'POST', body: { lotId } }),
    onSuccess: () => void qc.invalidateQueries({ queryKey: qk.workQueue }),
    onSettled: () => void qc.invalidateQueries({ queryKey: qk.workQueue }),
  });
}

export const labelsPdfUrl = (lotId: number) => downloadUrl(`/api/lots/${lotId}/labels.pdf`);
export const rawFileUrl = (measurementId: number) => downloadUrl(`/api/measurements/${measurementId}/file`);

/** The approved sources of a grade, with their status, for the receipt form. */
export const useReceiptSources = (materialId: number | null) =>
  useQuery({
    queryKey: qk.suppliers.sources(materialId),
    queryFn: () => apiFetch<SourceRecord[]>(`/api/sources?materialId=${materialId}`),
    enabled: !!materialId,
  });

export function useReceiveLot() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: LotCreate) => apiFetch<LotDetail>('/api/lots', { method: 'POST', body }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: qk.lots.all });
      void qc.invalidateQueries({ queryKey: qk.workQueue });
    },
  });
}

function useLotRefresh() {
  const qc = useQueryClient();
  return (lotId: number, testId?: number | null) => {
    void qc.invalidateQueries({ queryKey: qk.lots.one(lotId) });
    void qc.invalidateQueries({ queryKey: qk.lots.all });
    void qc.invalidateQueries({ queryKey: qk.workQueue });
    if (testId) void qc.invalidateQueries({ queryKey: qk.tests.one(testId) });
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
  target: { containerId?: number; label?: string; reason?: string; confirmIdentifiers?: boolean },
  file: File,
  onProgress?: (p: UploadProgress) => void,
) {
  const fd = new FormData();
  if (target.containerId) fd.append('containerId', String(target.containerId));
  if (target.label) fd.append('label', target.label);
  if (target.reason) fd.append('reason', target.reason);
  if (target.confirmIdentifiers) fd.append('confirmIdentifiers', 'true');
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
    mutationFn: (signature: SignatureInput) =>
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
    void qc.invalidateQueries({ queryKey: qk.tests.one(testId) });
    void qc.invalidateQueries({ queryKey: qk.tests.verificationQueue });
    void qc.invalidateQueries({ queryKey: qk.lots.all });
    void qc.invalidateQueries({ queryKey: qk.workQueue });
    void qc.invalidateQueries({ queryKey: qk.investigations.all });
    void invalidateMe(qc);
  };
}

export function useVerify(testId: number) {
  const done = useDecisionRefresh(testId);
  return useMutation({
    mutationFn: (body: { signature: SignatureInput; comment?: string }) =>
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
    mutationFn: (body: { signature: SignatureInput; reason: string }) =>
      apiFetch<TestDetail>(`/api/tests/${testId}/return`, { method: 'POST', body }),
    onSuccess: done,
  });
}

/** Operators an attempt in progress can be handed over to. */
export function useHandOverCandidates(testId: number, enabled: boolean) {
  return useQuery({
    queryKey: qk.tests.handOverCandidates(testId),
    queryFn: () => apiFetch<OperatorChoice[]>(`/api/tests/${testId}/hand-over-candidates`),
    enabled,
  });
}

/** Hands the attempt over to another operator (recorded and audited). */
export function useHandOver(lotId: number, testId: number) {
  const refresh = useLotRefresh();
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: HandOverInput) =>
      apiFetch<TestDetail>(`/api/tests/${testId}/hand-over`, { method: 'POST', body }),
    onSuccess: () => {
      refresh(lotId, testId);
      void qc.invalidateQueries({ queryKey: qk.tests.handOverCandidates(testId) });
    },
  });
}

/** Containers blocked after too many invalid measurements (QA). */
export function useBlockedContainers(enabled: boolean) {
  return useQuery({
    queryKey: qk.tests.blockedContainers,
    queryFn: () => apiFetch<BlockedContainer[]>('/api/containers/blocked'),
    enabled,
  });
}

/** QA releases a blocked container, with a reason and an e-signature. */
export function useReleaseBlock() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { containerId: number; reason: string; signature: SignatureInput }) =>
      apiFetch<BlockedContainer[]>(`/api/containers/${v.containerId}/release`, {
        method: 'POST',
        body: { reason: v.reason, signature: v.signature },
      }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: qk.tests.blockedContainers });
      void qc.invalidateQueries({ queryKey: qk.workQueue });
    },
  });
}
