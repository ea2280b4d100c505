/** Instrument registry hooks: instruments, check specifications, polystyrene instrument checks. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch, apiUpload, downloadUrl, type UploadProgress } from '../../../lib/api';
import { invalidateMe } from '../../../lib/query-keys';
export type { SignatureRecord as Signature } from '../../../../server/lib/esign';
export type { CheckBand } from '../../../../server/modules/instruments/repo';
import type { SignatureRecord as Signature } from '../../../../server/lib/esign';
import type { CheckBand } from '../../../../server/modules/instruments/repo';

export interface InstrumentListItem {
  id: number;
  name: string;
  serialNumber: string;
  technique: string;
  sampling: string;
  location: string;
  checkValidityHours: number;
  active: boolean;
  checkDue: boolean;
  validCheck: { id: number; performedAt: string; validUntil: string } | null;
  lastCheck: {
    id: number;
    verdict: 'pass' | 'fail';
    performedAt: string;
    validUntil: string | null;
    performedByName: string | null;
  } | null;
  currentSpec: { id: number; version: number; kind: string } | null;
}

export interface CheckSpec {
  id: number;
  version: number;
  kind: string;
  bands: CheckBand[];
  justification: string | null;
  status: 'draft' | 'approved' | 'superseded';
  createdAt: string;
  createdByName: string | null;
  signature: Signature | null;
}

export interface PolystyreneBandResult {
  nominal: number;
  found: number | null;
  deviation: number | null;
  tolerance: number;
  ok: boolean;
}

export interface CheckResult {
  verdict: 'pass' | 'fail';
  spec: string;
  mode: 'transmission' | 'atr';
  bands: PolystyreneBandResult[];
  resolution: {
    applicable: boolean;
    reason: string | null;
    checks: { name: string; value: number; limit: number; ok: boolean }[];
    ok: boolean;
  };
  engineVersion: string;
}

export interface InstrumentCheck {
  id: number;
  instrumentId: number;
  specId: number;
  fileId: number;
  result: CheckResult;
  verdict: 'pass' | 'fail';
  engineVersion: string;
  performedBy: number;
  performedByName: string | null;
  performedAt: string;
  validUntil: string | null;
  signature: Signature | null;
}

export interface InstrumentDetail extends InstrumentListItem {
  specs: CheckSpec[];
  checks: InstrumentCheck[];
}

export interface InstrumentCreateInput {
  name: string;
  serialNumber: string;
  technique: 'mid-ir' | 'nir';
  sampling: 'atr' | 'transmission' | 'diffuse-reflectance';
  location: string;
  checkValidityHours: number;
}

const KEY = ['instruments'] as const;

export function useInstruments() {
  return useQuery({ queryKey: KEY, queryFn: () => apiFetch<InstrumentListItem[]>('/api/instruments') });
}

export function useInstrument(id: number) {
  return useQuery({ queryKey: [...KEY, id], queryFn: () => apiFetch<InstrumentDetail>(`/api/instruments/${id}`) });
}

export function useCreateInstrument() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: InstrumentCreateInput) =>
      apiFetch<InstrumentDetail>('/api/instruments', { method: 'POST', body }),
    onSuccess: () => qc.invalidateQueries({ queryKey: KEY }),
  });
}

export function useApproveSpec() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({
      id,
      ...body
    }: {
      id: number;
      spec: { kind: string; bands?: CheckBand[]; justification: string };
      signature: { username?: string; password: string };
    }) => apiFetch<InstrumentDetail>(`/api/instruments/${id}/specs`, { method: 'POST', body }),
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: KEY });
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
      signature: { username?: string; password: string };
      onProgress: (p: UploadProgress) => void;
    }) => {
      const fd = new FormData();
      fd.append('file', file, file.name);
      fd.append('password', signature.password);
      if (signature.username) fd.append('username', signature.username);
      return apiUpload<InstrumentCheck>(`/api/instruments/${id}/checks`, fd, onProgress);
    },
    onSuccess: async () => {
      await qc.invalidateQueries({ queryKey: KEY });
      await invalidateMe(qc);
    },
  });
}

export const checkFileUrl = (instrumentId: number, checkId: number) =>
  downloadUrl(`/api/instruments/${instrumentId}/checks/${checkId}/file`);
