/**
 * Identity certificate hooks: list and search, one certificate, the lot's certificates,
 * verification (by upload or by number), superseding (QA) and the site signing identity (admin).
 * Verification is a mutation, not a query: each check is recorded in the audit trail, so it runs
 * only when the user asks for it, never on a refetch.
 */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiFetch, apiUpload, downloadUrl, type UploadProgress } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type { SignatureCredentials } from '../../../components/SignatureDialog';

import type {
  CertificateDetail,
  CertificateFilter,
  CertificateList,
  CertificateMeta,
  VerificationReport,
} from '../../../../server/modules/certificates/contract';
import type { SigningIdentity } from '../../../../server/lib/contract';

export type {
  CertificateContent,
  CertificateDetail,
  CertificateFilter,
  CertificateMeta,
  SignatureLine,
  VerificationReport,
} from '../../../../server/modules/certificates/contract';
export type { PdfSignatureCheck as SignatureCheck, SigningIdentity } from '../../../../server/lib/contract';

export function useCertificates(filter: CertificateFilter) {
  return useQuery({
    queryKey: qk.certificates.list(filter),
    queryFn: ({ signal }) =>
      apiFetch<CertificateList>('/api/certificates', {
        query: { ...filter, limit: 200 },
        signal,
      }),
    placeholderData: (prev) => prev,
  });
}

/** Every certificate of one lot, newest first (the current one is `current: true`). */
export function useLotCertificates(lotId: number | undefined) {
  return useQuery({
    queryKey: qk.certificates.ofLot(lotId),
    enabled: lotId !== undefined,
    queryFn: ({ signal }) =>
      apiFetch<CertificateList>('/api/certificates', {
        query: { lotId, limit: 50 },
        signal,
      }),
  });
}

export function useCertificate(id: number) {
  return useQuery({
    queryKey: qk.certificates.one(id),
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
      await Promise.all([qc.invalidateQueries({ queryKey: qk.certificates.all }), invalidateMe(qc)]);
    },
    onError: () => invalidateMe(qc),
  });
}

export function useSigningIdentity(enabled: boolean) {
  return useQuery({
    queryKey: qk.certificates.signingIdentity,
    enabled,
    queryFn: ({ signal }) => apiFetch<SigningIdentity>('/api/certificates/signing-identity', { signal }),
    staleTime: 10 * 60_000,
  });
}
