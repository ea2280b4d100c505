/** Reference library hooks: materials, identity methods, reference spectra, specificity. */
import { useMutation, useQuery, useQueryClient, type QueryClient } from '@tanstack/react-query';
import { apiFetch, apiUpload, downloadUrl, type UploadProgress } from '../../../lib/api';
import { invalidateMe, qk } from '../../../lib/query-keys';
import type {
  ApproveMethodInput,
  ApproveReferenceInput,
  GateOverride,
  GateOverrideRequestInput,
  IrSuitability,
  IrSuitabilityInput,
  BandsUpdateInput,
  GateReport,
  Material,
  MaterialCreateInput,
  MaterialDetail,
  MaterialListItem,
  MaterialUpdateInput,
  MethodUpdateInput,
  MethodWithSignatures,
  ReferenceDetail,
  ReferenceListItem,
  ReferenceOverlay,
  ReferenceStatus,
  ReferenceUploadFields,
  RetireReferenceInput,
  SpecificityMatrix,
} from '../../../../server/modules/library/contract';
import type { SignatureCredentials } from '../../../components/SignatureDialog';

export type { SignatureRecord as Signature } from '../../../../server/lib/contract';
export type { SignatureCredentials } from '../../../components/SignatureDialog';
export type {
  DirectionScore,
  GateOverride,
  IrSuitability,
  MethodGateReport,
  GatePair,
  GateReport,
  IdentityMethodInput as IdentityMethodParams,
  Material,
  MaterialCreateInput,
  MaterialDetail,
  MaterialListItem,
  MatrixCell,
  MatrixMaterial,
  MethodWithSignatures as MethodVersion,
  OverlayTrace,
  ReferenceDetail,
  ReferenceListItem,
  ReferenceStatus,
  ReferenceUploadFields as UploadFields,
  SpecificityMatrix,
  StoredBand,
  BandCandidates,
} from '../../../../server/modules/library/contract';

/** Everything in the library may change after a write (status counts, matrix, gate). */
function invalidateLibrary(qc: QueryClient) {
  return qc.invalidateQueries({ queryKey: qk.library.all });
}

export function useMaterials() {
  return useQuery({ queryKey: qk.library.materials, queryFn: () => apiFetch<MaterialListItem[]>('/api/materials') });
}

export function useMaterial(id: number) {
  return useQuery({
    queryKey: qk.library.material(id),
    queryFn: () => apiFetch<MaterialDetail>(`/api/materials/${id}`),
  });
}

export function useReferences(materialId: number) {
  return useQuery({
    queryKey: qk.library.references(materialId),
    queryFn: () => apiFetch<ReferenceListItem[]>(`/api/materials/${materialId}/references`),
  });
}

export function useReferencesByStatus(status: ReferenceStatus) {
  return useQuery({
    queryKey: qk.library.byStatus(status),
    queryFn: () => apiFetch<ReferenceListItem[]>('/api/references', { query: { status } }),
  });
}

export function useReference(id: number) {
  return useQuery({
    queryKey: qk.library.reference(id),
    queryFn: () => apiFetch<ReferenceDetail>(`/api/references/${id}`),
  });
}

export function useReferenceOverlay(id: number) {
  return useQuery({
    queryKey: qk.library.overlay(id),
    queryFn: () => apiFetch<ReferenceOverlay>(`/api/references/${id}/overlay`),
    staleTime: 5 * 60_000,
  });
}

export function useSpecificityGate(id: number, enabled: boolean) {
  return useQuery({
    queryKey: qk.library.gate(id),
    queryFn: () => apiFetch<GateReport>(`/api/references/${id}/specificity`),
    enabled,
  });
}

export function useSpecificityMatrix(technique: string) {
  return useQuery({
    queryKey: qk.library.matrix(technique),
    queryFn: () => apiFetch<SpecificityMatrix>('/api/library/specificity', { query: { technique } }),
  });
}

export const referenceFileUrl = (id: number) => downloadUrl(`/api/references/${id}/file`);

function useLibraryMutation<V, R>(fn: (v: V) => Promise<R>, opts: { signs?: boolean } = {}) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: fn,
    onSuccess: async () => {
      await invalidateLibrary(qc);
      if (opts.signs) await invalidateMe(qc);
    },
  });
}

export function useCreateMaterial() {
  return useLibraryMutation((body: MaterialCreateInput) =>
    apiFetch<Material & { draftMethodId: number }>('/api/materials', { method: 'POST', body }),
  );
}

export function useUpdateMaterial() {
  return useLibraryMutation(({ id, ...body }: MaterialUpdateInput & { id: number }) =>
    apiFetch<Material>(`/api/materials/${id}`, { method: 'PATCH', body }),
  );
}

export function useUpdateMethod() {
  return useLibraryMutation(({ id, ...body }: MethodUpdateInput & { id: number }) =>
    apiFetch<MethodWithSignatures>(`/api/methods/${id}`, { method: 'PATCH', body }),
  );
}

export function useNewMethodVersion() {
  return useLibraryMutation(({ id, changeNote }: { id: number; changeNote?: string }) =>
    apiFetch<MethodWithSignatures>(`/api/methods/${id}/new-version`, { method: 'POST', body: { changeNote } }),
  );
}

export function useApproveMethod() {
  return useLibraryMutation(
    ({ id, signature, overrideId }: { id: number; signature: SignatureCredentials; overrideId?: number }) =>
      apiFetch<MethodWithSignatures>(`/api/methods/${id}/approve`, {
        method: 'POST',
        body: { signature, overrideId } satisfies ApproveMethodInput,
      }),
    { signs: true },
  );
}

/** First of the two QA signatures of a gate override (kind: methods or references). */
export function useRequestGateOverride(kind: 'methods' | 'references') {
  return useLibraryMutation(
    ({ id, ...body }: GateOverrideRequestInput & { id: number }) =>
      apiFetch<GateOverride>(`/api/${kind}/${id}/gate-override`, { method: 'POST', body }),
    { signs: true },
  );
}

export function useDecideIrSuitability() {
  return useLibraryMutation(
    ({ id, ...body }: IrSuitabilityInput & { id: number }) =>
      apiFetch<IrSuitability>(`/api/materials/${id}/ir-suitability`, { method: 'POST', body }),
    { signs: true },
  );
}

export const validationRecordUrl = (methodId: number) => downloadUrl(`/api/methods/${methodId}/validation-record`);

export function useUpdateBands() {
  return useLibraryMutation(({ id, bands, reason }: BandsUpdateInput & { id: number }) =>
    apiFetch<ReferenceDetail>(`/api/references/${id}/bands`, { method: 'PUT', body: { bands, reason } }),
  );
}

export function useApproveReference() {
  return useLibraryMutation(
    ({ id, signature, overrideId }: ApproveReferenceInput & { id: number }) =>
      apiFetch<ReferenceDetail>(`/api/references/${id}/approve`, {
        method: 'POST',
        body: { signature, overrideId },
      }),
    { signs: true },
  );
}

export function useRetireReference() {
  return useLibraryMutation(
    ({ id, signature, reason }: RetireReferenceInput & { id: number }) =>
      apiFetch<ReferenceDetail>(`/api/references/${id}/retire`, { method: 'POST', body: { signature, reason } }),
    { signs: true },
  );
}

/** Uploads one reference file (one request per file, so each has its own progress and outcome). */
export function uploadReference(
  materialId: number,
  file: File,
  fields: ReferenceUploadFields,
  onProgress: (p: UploadProgress) => void,
): Promise<ReferenceDetail> {
  const fd = new FormData();
  fd.append('files', file, file.name);
  fd.append('supplier', fields.supplier);
  fd.append('supplierLot', fields.supplierLot);
  fd.append('measuredHow', fields.measuredHow);
  return apiUpload<ReferenceDetail[]>(`/api/materials/${materialId}/references`, fd, onProgress).then(
    (list) => list[0],
  );
}

/** Call after uploads finish so lists and counts refresh. */
export function useInvalidateLibrary() {
  const qc = useQueryClient();
  return () => invalidateLibrary(qc);
}
