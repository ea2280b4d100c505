/** The metadata shape of a certificate row, as lists, detail and verification show it. */
import type { CertificateMeta } from './contract';
import type * as repo from './repo';

export function toMeta(r: repo.CertificateListRow): CertificateMeta {
  return {
    id: Number(r.id),
    number: r.number,
    lotId: Number(r.lot_id),
    lotNumber: r.lot_number,
    materialId: Number(r.material_id),
    materialCode: r.material_code,
    materialName: r.material_name,
    testId: Number(r.test_id),
    issuedAt: new Date(r.issued_at).toISOString(),
    issuedBy: r.issued_by_name ?? null,
    sha256: r.sha256,
    size: Number(r.size),
    signerFingerprint: r.signer_fingerprint,
    supersedes: r.supersedes_id ? { id: Number(r.supersedes_id), number: r.supersedes_number ?? '' } : null,
    supersededBy: r.superseded_by_id ? { id: Number(r.superseded_by_id), number: r.superseded_by_number ?? '' } : null,
    current: !r.superseded_by_id,
    supersedeReason: r.supersede_reason,
    downloadUrl: `/api/certificates/${r.id}/pdf`,
  };
}
