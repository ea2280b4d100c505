/**
 * Identity certificate hooks: list and search, one certificate, the lot's certificates,
 * verification (by upload or by number), superseding (QA) and the site signing identity (admin).
 * Verification is a mutation, not a query: each check is recorded in the audit trail, so it runs
 * only when the user asks for it, never on a refetch.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch, apiUpload, downloadUrl, type UploadProgress } from '../../../lib/api';
import { invalidateMe } from '../../../lib/query-keys';
import type { SignatureCredentials } from '../../../components/SignatureDialog';

// Response shapes declared once, on the server (type-only: nothing of the server reaches the bundle).
export type { CertificateMeta } from '../../../../server/modules/certificates/service';
export type { CertificateContent, SignatureLine } from '../../../../server/modules/certificates/content';
export type { PdfSignatureCheck as SignatureCheck } from '../../../../server/lib/pdf-sign';
import type { CertificateMeta } from '../../../../server/modules/certificates/service';
import type { CertificateContent } from '../../../../server/modules/certificates/content';
import type { PdfSignatureCheck as SignatureCheck } from '../../../../server/lib/pdf-sign';

export interface CertificateDetail extends CertificateMeta {
  content: CertificateContent | null;
}

export interface VerificationReport {
  verdict: 'authentic' | 'not authentic';
  summary: string;
  reasons: string[];
  checkedBy: 'upload' | 'number';
  fileSha256: string | null;
  certificate: CertificateMeta | null;
  byteIdentical: boolean | null;
  signature: SignatureCheck | null;
  signedBySite: boolean | null;
  lot: { id: number; lotNumber: string; materialCode: string; materialName: string } | null;
}

export interface SigningIdentity {
  fingerprint: string;
  subject: string;
  issuer: string;
  serialNumber: string;
  notBefore: string;
  notAfter: string;
  source: 'configured' | 'generated';
}

export interface CertificateFilter {
  lot?: string;
  material?: string;
  number?: string;
  from?: string;
  to?: string;
  lotId?: number;
}

const KEY = ['certificates'] as const;

export function useCertificates(filter: CertificateFilter) {
  return useQuery({
    queryKey: [...KEY, 'list', filter],
    queryFn: ({ signal }) =>
      apiFetch<{ items: CertificateMeta[]; total: number }>('/api/certificates', {
        query: { ...filter, limit: 200 },
        signal,
      }),
    placeholderData: (prev) => prev,
  });
}

/** Every certificate of one lot, newest first (the current one is `current: true`). */
export function useLotCertificates(lotId: number | undefined) {
  return useQuery({
    queryKey: [...KEY, 'lot', lotId],
    enabled: lotId !== undefined,
    queryFn: ({ signal }) =>
      apiFetch<{ items: CertificateMeta[]; total: number }>('/api/certificates', {
        query: { lotId, limit: 50 },
        signal,
      }),
  });
}

export function useCertificate(id: number) {
  return useQuery({
    queryKey: [...KEY, 'one', id],
    queryFn: ({ signal }) => apiFetch<CertificateDetail>(`/api/certificates/${id}`, { signal }),
  });
}

/** Link for downloading the signed PDF exactly as stored (the server records the download). */
export function certificatePdfUrl(id: number): string {
  return downloadUrl(`/api/certificates/${id}/pdf`);
}

export function useVerifyByNumber() {
  return useMutation({
    mutationFn: (number: string) => apiFetch<VerificationReport>('/api/certificates/verify', { query: { number } }),
  });
}

export function useVerifyUpload() {
  return useMutation({
    mutationFn: ({ file, onProgress }: { file: File; onProgress?: (p: UploadProgress) => void }) => {
      const form = new FormData();
      form.append('file', file);
      return apiUpload<VerificationReport>('/api/certificates/verify', form, onProgress);
    },
  });
}

export function useSupersede() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ id, reason, signature }: { id: number; reason: string; signature: SignatureCredentials }) =>
      apiFetch<CertificateMeta>(`/api/certificates/${id}/supersede`, { method: 'POST', body: { reason, signature } }),
    onSuccess: async () => {
      await Promise.all([qc.invalidateQueries({ queryKey: KEY }), invalidateMe(qc)]);
    },
    onError: () => invalidateMe(qc),
  });
}

export function useSigningIdentity(enabled: boolean) {
  return useQuery({
    queryKey: [...KEY, 'signing-identity'],
    enabled,
    queryFn: ({ signal }) => apiFetch<SigningIdentity>('/api/certificates/signing-identity', { signal }),
    staleTime: 10 * 60_000,
  });
}
