/** Reading certificates: list, detail and the stored bytes (a download is audited). */
import type { Knex } from 'knex';
import { auditNow, type Actor } from '../../lib/audit';
import { parseJson } from '../../lib/db';
import { notFound } from '../../lib/errors';
import type { CertificateContent, CertificateDetail, CertificateList, CertificateMeta } from './contract';
import { toMeta } from './meta';
import * as repo from './repo';

export async function listCertificates(db: Knex, f: repo.ListFilter): Promise<CertificateList> {
  const { rows, total } = await repo.listCertificates(db, f);
  return { items: rows.map(toMeta), total };
}

export async function getCertificate(db: Knex, id: number): Promise<CertificateDetail> {
  const r = await repo.findListRow(db, id);
  if (!r) throw notFound('The certificate');
  return { ...toMeta(r), content: parseJson<CertificateContent | null>(r.content, null) };
}

/** The stored bytes, audited as a download. */
export async function downloadCertificate(
  db: Knex,
  id: number,
  actor: Actor,
  ip: string | null,
): Promise<{ meta: CertificateMeta; pdf: Buffer }> {
  const r = await repo.findListRow(db, id);
  if (!r) throw notFound('The certificate');
  const pdf = await repo.pdfBytes(db, id);
  if (!pdf) throw notFound('The certificate file');
  await auditNow(db, {
    actor,
    action: 'certificate.downloaded',
    entityType: 'certificate',
    entityId: id,
    after: { number: r.number, sha256: r.sha256, lotNumber: r.lot_number },
    ip,
  });
  return { meta: toMeta(r), pdf };
}
