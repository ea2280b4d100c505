/**
 * Verifying a certificate: an uploaded file against the stored copies and its own signature
 * (with its time-stamp), or the stored copy of a number against its recorded SHA-256. Audited.
 */
import type { Knex } from 'knex';
import { auditNow, type Actor } from '../../lib/audit';
import { sha256Hex } from '../../lib/canonical';
import { unprocessable } from '../../lib/errors';
import { must } from '../../lib/db';
import type { PdfSignatureCheck } from '../../lib/contract';
import { verifyPdfSignature } from '../../lib/signing';
import { trustedTsaRoots } from './config';
import type { VerificationReport } from './contract';
import { toMeta } from './meta';
import * as repo from './repo';

const NUMBER_RE = /IC-\d{4}-\d{5,}/;

function claimedNumber(pdf: Buffer): string | null {
  const text = pdf.toString('latin1');
  const reason = /\/Reason\s*\(([^)]*)\)/.exec(text);
  const m = NUMBER_RE.exec(reason?.[1] ?? '') ?? NUMBER_RE.exec(text);
  return m ? m[0] : null;
}

function report(
  checkedBy: VerificationReport['checkedBy'],
  fileSha256: string | null,
  row: repo.CertificateListRow | undefined,
  byteIdentical: boolean | null,
  signature: PdfSignatureCheck | null,
): VerificationReport {
  const reasons: string[] = [];
  const signedBySite = row && signature?.fingerprint ? signature.fingerprint === row.signer_fingerprint : null;
  if (!row)
    reasons.push(
      checkedBy === 'number'
        ? 'No certificate with this number is stored.'
        : 'The file matches no certificate stored in Drumline.',
    );
  else if (byteIdentical === false)
    reasons.push(
      checkedBy === 'number'
        ? 'The stored bytes no longer match the SHA-256 recorded at issue.'
        : `The file is not byte-identical to the stored certificate ${row.number}.`,
    );
  if (signature && !signature.signed) reasons.push('The file carries no digital signature.');
  else if (signature && !signature.valid)
    reasons.push(`The digital signature does not verify: ${signature.problem ?? 'unknown problem'}`);
  if (signature?.valid && signedBySite === false)
    reasons.push('The file was signed with a certificate other than the one recorded for this certificate.');
  if (signature?.valid && !signature.timeStamp)
    reasons.push('Note: the signature carries no time-stamp (signed before trusted time-stamps were introduced).');
  if (row?.superseded_by_id)
    reasons.push(`Note: certificate ${row.number} was superseded by ${row.superseded_by_number}.`);
  const authentic = !!row && byteIdentical === true && !!signature?.valid && signedBySite === true;
  const meta = row ? toMeta(row) : null;
  const summary = authentic
    ? `Authentic: this is certificate ${row!.number} for lot ${row!.lot_number}, byte-identical to the stored copy, with a valid digital signature of the site${signature?.timeStamp?.valid ? `, time-stamped ${signature.timeStamp.time} by ${signature.timeStamp.authority}` : ''}.`
    : `Not authentic${row ? ` (compared with certificate ${row.number})` : ''}: ${reasons.filter((r) => !r.startsWith('Note:')).join(' ')}`;
  return {
    verdict: authentic ? 'authentic' : 'not authentic',
    summary,
    reasons,
    checkedBy,
    fileSha256,
    certificate: meta,
    byteIdentical,
    signature,
    signedBySite,
    lot: row
      ? {
          id: Number(row.lot_id),
          lotNumber: row.lot_number,
          materialCode: row.material_code,
          materialName: row.material_name,
        }
      : null,
  };
}

async function auditVerification(db: Knex, actor: Actor, ip: string | null, r: VerificationReport): Promise<void> {
  await auditNow(db, {
    actor,
    // A check that does not find the file authentic is its own event: a failed verification,
    // never recorded under the word "verified" (docs/certificates.md, "Checking a certificate").
    action: r.verdict === 'authentic' ? 'certificate.verified' : 'certificate.verification-failed',
    entityType: 'certificate',
    entityId: r.certificate?.id ?? null,
    after: {
      checkedBy: r.checkedBy,
      number: r.certificate?.number ?? null,
      fileSha256: r.fileSha256,
      byteIdentical: r.byteIdentical,
      signatureValid: r.signature?.valid ?? null,
      signedBySite: r.signedBySite,
      verdict: r.verdict,
    },
    ip,
  });
}

/** Checks an uploaded file against the stored certificates and its own embedded signature. Audited. */
export async function verifyUpload(
  db: Knex,
  file: Buffer,
  actor: Actor,
  ip: string | null,
): Promise<VerificationReport> {
  if (file.length < 8 || file.subarray(0, 5).toString('latin1') !== '%PDF-')
    throw unprocessable(
      'NOT_A_PDF',
      'The file is not a PDF. Upload the identity certificate PDF as it was downloaded.',
    );
  const sha = sha256Hex(file);
  let row: repo.CertificateListRow | undefined;
  let identical = false;
  for (const id of await repo.findIdsBySha(db, sha)) {
    const bytes = await repo.pdfBytes(db, id);
    if (bytes && bytes.equals(file)) {
      row = await repo.findListRow(db, id);
      identical = true;
      break;
    }
  }
  if (!row) {
    const number = claimedNumber(file);
    if (number) row = await repo.findByNumber(db, number);
  }
  const r = report(
    'upload',
    sha,
    row,
    row ? identical : null,
    verifyPdfSignature(file, { tsaTrustedPem: trustedTsaRoots() }),
  );
  await auditVerification(db, actor, ip, r);
  return r;
}

/** Checks the stored certificate of a number: bytes against the recorded SHA-256, and its signature. Audited. */
export async function verifyByNumber(
  db: Knex,
  number: string,
  actor: Actor,
  ip: string | null,
): Promise<VerificationReport> {
  const row = await repo.findByNumber(db, number.trim().toUpperCase());
  let r: VerificationReport;
  if (!row) r = report('number', null, undefined, null, null);
  else {
    const bytes = must(await repo.pdfBytes(db, row.id), `The PDF of certificate ${row.number}`);
    const sha = sha256Hex(bytes);
    r = report('number', sha, row, sha === row.sha256, verifyPdfSignature(bytes, { tsaTrustedPem: trustedTsaRoots() }));
  }
  await auditVerification(db, actor, ip, r);
  return r;
}
