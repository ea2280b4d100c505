/** Hooks of receipt, testing and verification (the only place this feature talks to the server). */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch, apiUpload, downloadUrl, type UploadProgress } from '../../../lib/api';
import { invalidateMe } from '../../../lib/query-keys';
import type { LotCreate } from '../../../../server/modules/lots/schemas';
import type { MatchStatus } from '../../../../server/modules/testing/schemas';
export type { SignatureRecord as Signature } from '../../../../server/lib/esign';
import type { SignatureRecord as Signature } from '../../../../server/lib/esign';

export type Verdict3 = 'pass' | 'fail' | 'invalid';

export interface ReceivableMaterial {
  id: number;
  code: string;
  name: string;
  grade: string;
  methodVersion: number;
  technique: string;
}

export interface LotSummary {
  id: number;
  lotNumber: string;
  material: { id: number; code: string; name: string; grade: string };
  supplier: string;
  supplierLot: string;
  containerCount: number;
  receivedDate: string;
  notes: string | null;
  status: 'quarantine' | 'released' | 'rejected';
  identityStatus: string;
  createdBy: { id: number; name: string };
  createdAt: string;
  updatedAt: string;
}

export interface LotContainer {
  id: number;
  seq: number;
  label: string;
  effective: { verdict: 'pass' | 'fail'; measurementId: number; testId: number } | null;
  current: { measurementId: number; verdict: Verdict3; matchScore: number | null } | null;
  currentInScope: boolean;
  measurements: number;
}

export interface LotTestSummary {
  id: number;
  attempt: number;
  status: TestStatus;
  retestOfInvestigationId: number | null;
  instrumentId: number | null;
  methodId: number;
  createdAt: string;
  performedBy: { id: number; name: string } | null;
  verifiedBy: { id: number; name: string } | null;
  returnedReason: string | null;
  measurements: number;
  signatures: Signature[];
}

export interface LotDetail extends LotSummary {
  containers: LotContainer[];
  tests: LotTestSummary[];
  currentTestId: number | null;
  investigations: {
    id: number;
    number: string;
    status: string;
    decision: string | null;
    openedAt: string;
    closedAt: string | null;
  }[];
  certificate:
    { state: 'issued'; id: number; number: string; issuedAt: string } | { state: 'pending' } | { state: 'none' };
}

export type TestStatus = 'in-progress' | 'awaiting-verification' | 'verified' | 'returned';

export interface MeasurementSummary {
  id: number;
  testId: number;
  containerId: number;
  label: string;
  verdict: Verdict3;
  matchScore: number | null;
  file: { id: number; name: string; sha256: string; size: number };
  instrumentId: number;
  instrumentCheckId: number;
  methodId: number;
  referenceIds: number[];
  engineVersion: string;
  authorisedByInvestigationId: number | null;
  createdBy: { id: number; name: string };
  createdAt: string;
}

export interface TestDetail {
  id: number;
  lot: {
    id: number;
    lotNumber: string;
    material: LotSummary['material'];
    status: string;
    identityStatus: string;
    containerCount: number;
  };
  attempt: number;
  status: TestStatus;
  statusLabel: string;
  method: { id: number; version: number; technique: string; status: string } | null;
  instrument: { id: number; name: string; serialNumber: string; technique: string; sampling: string } | null;
  retestOfInvestigationId: number | null;
  createdBy: { id: number; name: string };
  createdAt: string;
  performedBy: { id: number; name: string } | null;
  verifiedBy: { id: number; name: string } | null;
  returnedReason: string | null;
  signatures: Signature[];
  readiness: { ready: boolean; missing: string[]; invalid: string[]; measured: number; inScope: number };
  measurerIds: number[];
  containers: {
    id: number;
    seq: number;
    label: string;
    inScope: boolean;
    latest: MeasurementSummary | null;
    measurements: MeasurementSummary[];
  }[];
}

export interface Criterion {
  key: string;
  name: string;
  value: number;
  limit: number;
  comparison: '>=' | '<=';
  verdict: 'pass' | 'fail';
  referenceId: string | null;
}

export interface BandRow {
  referenceBand: number;
  sampleBand: number | null;
  shift: number | null;
  tolerance: number;
  /** Since engine 2.0.0: the rule that set the tolerance, in words, and whether it was widened for a broad band. */
  toleranceRule?: string;
  widened?: boolean;
  referenceWidth?: number | null;
  withinTolerance: boolean;
  assignment: string;
  referenceProminence: number | null;
  sampleProminence: number | null;
  /** Since engine 2.0.0, when the method compares relative band intensities. */
  intensity?: {
    reference: number;
    sample: number | null;
    difference: number | null;
    tolerance: number;
    verdict: 'pass' | 'fail' | 'not-compared';
  };
}

export interface HintEntry {
  materialId: number;
  materialCode: string;
  materialName: string;
  referenceCode: string;
  score: number;
  isTestedMaterial: boolean;
}

export interface StoredResult {
  verdict: Verdict3;
  engineVersion: string;
  quality: { ok: boolean; problems: { code: string; message: string }[] };
  bestReferenceId: string | null;
  criteria: Criterion[];
  bands: BandRow[];
  extraBands: { position: number; prominence: number; width: number; assignment: string }[];
  explanation: string[];
  libraryHint: HintEntry[] | null;
  libraryHintText: string | null;
  sampleMeta: {
    title: string;
    format: string;
    originalXUnits: string;
    originalYUnits: string;
    points: number;
    warnings: string[];
  };
}

export interface MeasurementDetail extends MeasurementSummary {
  result: StoredResult | null;
  method: { id: number; version: number; technique: string; status: string } | null;
  references: {
    id: number;
    code: string;
    status: string;
    approvedAt: string | null;
    material: { code: string; name: string };
  }[];
  instrument: { id: number; name: string; serialNumber: string } | null;
  instrumentCheck: {
    id: number;
    specId: number;
    verdict: 'pass' | 'fail';
    performedAt: string;
    validUntil: string | null;
    engineVersion: string;
  } | null;
}

export interface MeasurementPlotData {
  measurementId: number;
  raw: { x: number[]; y: number[]; yKind: string; title: string };
  overlay: {
    x: number[];
    sample: (number | null)[];
    reference: (number | null)[];
    difference: (number | null)[];
    referenceCode: string;
  } | null;
  excludedRegions: { from: number; to: number; label: string }[];
}

export interface InstrumentStatus {
  instrument: {
    id: number;
    name: string;
    serialNumber: string;
    technique: string;
    sampling: string;
    location: string;
    active: boolean;
  };
  check: { id: number; verdict: 'pass' | 'fail'; performedAt: string; validUntil: string | null } | null;
  usable: boolean;
  reason: string | null;
}

export interface MatchRow {
  fileName: string;
  status: MatchStatus;
  label: string | null;
  containerId: number | null;
}

export interface UploadResult {
  id: number;
  containerId: number;
  label: string;
  verdict: Verdict3;
  matchScore: number | null;
  result: StoredResult;
}

export interface ReviewData {
  test: TestDetail;
  measurements: MeasurementDetail[];
  instrumentChecks: NonNullable<MeasurementDetail['instrumentCheck']>[];
  methods: { id: number; version: number; technique: string; approvedAt: string | null }[];
  references: MeasurementDetail['references'];
}

export interface QueueTest {
  testId: number;
  lotId: number;
  lotNumber: string;
  material: string;
  attempt: number;
  isRetest: boolean;
  containers: number;
  failing: number;
  performedBy: string;
  signedPerformedAt: string;
}

export interface WorkQueue {
  sections: {
    key: string;
    title: string;
    roles: string[];
    count: number;
    items: { id: number; title: string; detail: string; href: string }[];
  }[];
}

export type SignatureBody = { username?: string; password: string };

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
      apiFetch<{ id: number; attempt: number }>(`/api/lots/${lotId}/tests`, { method: 'POST', body: { instrumentId } }),
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
      apiFetch<{
        outcome: 'passed' | 'failed';
        investigation: { id: number; number: string } | null;
        certificate: 'issued' | 'pending' | null;
      }>(`/api/tests/${testId}/verify`, {
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
