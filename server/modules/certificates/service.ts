/**
 * Identity certificates: issue (automatically after a lot passes and is verified), supersede
 * (QA, with reason and e-signature), list, download and verify.
 *
 * Issuing renders and signs the PDF first (outside any transaction, it takes tens of
 * milliseconds), then stores it in ONE transaction: certificate row with the bytes and their
 * SHA-256, the lot's pointer to its current certificate, and the audit events. A failure
 * anywhere in that transaction leaves neither a certificate nor a changed lot. A certificate is
 * never regenerated over an old one: a superseding certificate is a new row that references the
 * one it replaces; both stay readable.
 */
import type { Knex } from 'knex';
import { appendAudit, auditNow, type Actor } from '../../lib/audit';
import { sha256Hex } from '../../lib/canonical';
import { loadConfig, type AppConfig } from '../../lib/config';
import { parseJson } from '../../lib/db';
import { conflict, notFound, unprocessable } from '../../lib/errors';
import { formatSiteDate, type PdfSignatureCheck, type SignatureInput, type SigningIdentity } from '../../lib/contract';
import { checkSignatureCredentials, recordSignature } from '../../lib/esign';
import type { AuthUser } from '../../lib/http';
import { renderPdf } from '../../lib/pdf';
import { assertIrSuitable } from '../library/method-control';
import { getSigningIdentity, signingSettingsFrom, signPdf, verifyPdfSignature } from '../../lib/pdf-sign';
import { prepare, validateMethod, type IdentityMethod } from '../../spectra';
import { readSpectrumOff } from '../../workers/pool';
import { gatherContent } from './content';
import type {
  CertificateContent,
  CertificateDetail,
  CertificateList,
  CertificateMeta,
  VerificationReport,
} from './contract';
import { certificateDocument, type DocumentExtras } from './document';
import { overlaySvg } from './overlay';
import * as repo from './repo';

// ---------------------------------------------------------------------------------------------
// Configuration: set by the router at app creation; callers from other modules need not pass it.
// ---------------------------------------------------------------------------------------------

let registered: AppConfig | null = null;

export function setCertificateConfig(config: AppConfig): void {
  registered = config;
}

function configOf(c?: AppConfig): AppConfig {
  return c ?? registered ?? loadConfig();
}

export function signingIdentity(config?: AppConfig): SigningIdentity {
  return getSigningIdentity(signingSettingsFrom(configOf(config)));
}

// ---------------------------------------------------------------------------------------------
// Metadata shape
// ---------------------------------------------------------------------------------------------

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

// ---------------------------------------------------------------------------------------------
// Rendering
// ---------------------------------------------------------------------------------------------

/** Certificate number IC-YYYY-NNNNN (year in the site's time zone). */
export function formatNumber(year: number, seq: number): string {
  return `IC-${year}-${String(seq).padStart(5, '0')}`;
}

function yearIn(d: Date, timeZone: string): number {
  return Number(formatSiteDate(d, timeZone).slice(0, 4));
}

/** The overlay figure of the container with the lowest match score against its best reference. */
async function buildOverlay(db: Knex, content: CertificateContent): Promise<DocumentExtras> {
  const scored = content.containers.filter((c) => c.bestReferenceId !== null);
  if (scored.length === 0)
    return { overlaySvg: null, overlayCaption: 'No reference is recorded with the results; no overlay is drawn.' };
  const worst = scored.reduce((a, b) => ((b.matchScore ?? 2) < (a.matchScore ?? 2) ? b : a));
  const ref = content.references.find((r) => r.id === worst.bestReferenceId);
  try {
    const measurement = await db('measurement')
      .where({ id: worst.measurementId })
      .select('file_id', 'method_id')
      .first();
    const methodRow = await db('identity_method').where({ id: measurement.method_id }).select('params').first();
    const method = parseJson<IdentityMethod | null>(methodRow?.params, null);
    if (!method || validateMethod(method).length) throw new Error('the stored method parameters cannot be read');
    const refRow = await db('reference_spectrum').where({ id: worst.bestReferenceId }).select('file_id').first();
    const [sf, rf] = await Promise.all([repo.fileBytes(db, measurement.file_id), repo.fileBytes(db, refRow.file_id)]);
    if (!sf || !rf) throw new Error('a raw file is missing');
    const sample = prepare(await readSpectrumOff(sf.data, sf.file_name), method);
    const reference = prepare(await readSpectrumOff(rf.data, rf.file_name), method);
    const svg = overlaySvg({
      grid: sample.grid,
      mask: sample.mask,
      sample: sample.trace,
      reference: reference.trace,
      sampleLabel: `Sample: container ${worst.label} (measurement ${worst.measurementId})`,
      referenceLabel: `Reference: ${ref?.code ?? worst.bestReferenceId}`,
    });
    return {
      overlaySvg: svg,
      overlayCaption:
        `Container ${worst.label}, the lowest match score of the lot (${worst.matchScore === null ? 'n/a' : worst.matchScore.toFixed(4)}), ` +
        `against reference ${ref?.code ?? worst.bestReferenceId}: baseline-corrected, smoothed absorbance scaled to the strongest band, ` +
        `on the method grid; shaded regions are excluded by the method.`,
    };
  } catch (e) {
    return {
      overlaySvg: null,
      overlayCaption: `The overlay could not be drawn (${(e as Error).message}); the results above are unaffected.`,
    };
  }
}

export interface PreparedCertificate {
  content: CertificateContent;
  pdf: Buffer;
  sha256: string;
  fingerprint: string;
}

export interface PrepareInput {
  lotId: number;
  testId: number;
  number: string;
  issuedAt: Date;
  supersedes: CertificateContent['supersedes'];
}

/** Gathers, renders and signs a certificate (no writes). Used by issuing and by the benchmark. */
export async function prepareCertificate(
  db: Knex,
  input: PrepareInput,
  config?: AppConfig,
): Promise<PreparedCertificate> {
  const cfg = configOf(config);
  const settings = signingSettingsFrom(cfg);
  const identity = getSigningIdentity(settings);
  const { content } = await gatherContent(db, {
    lotId: input.lotId,
    testId: input.testId,
    number: input.number,
    issuedAt: input.issuedAt,
    site: { name: cfg.siteName, address: cfg.siteAddress, timeZone: cfg.siteTimeZone },
    publicUrl: cfg.publicUrl,
    signingFingerprint: identity.fingerprint,
    supersedes: input.supersedes,
  });
  const extras = await buildOverlay(db, content);
  const unsigned = await renderPdf(certificateDocument(content, extras));
  const { pdf, fingerprint } = await signPdf(
    unsigned,
    {
      reason: `Identity certificate ${content.number} for lot ${content.lot.lotNumber}`,
      location: cfg.siteName,
      name: `${cfg.siteName} identity certificates`,
      contactInfo: cfg.publicUrl,
      signingTime: input.issuedAt,
    },
    settings,
  );
  return { content, pdf, sha256: sha256Hex(pdf), fingerprint };
}

// ---------------------------------------------------------------------------------------------
// Issuing
// ---------------------------------------------------------------------------------------------

export interface IssueInput {
  lotId: number;
  testId: number;
  actor: Actor;
  /** The certificate this one replaces (must be the lot's current one). */
  supersedesId?: number;
  reason?: string;
  ip?: string | null;
}

export interface IssueOptions {
  config?: AppConfig;
  /** QA's e-signature for a superseding certificate (credentials checked before). */
  signature?: { user: AuthUser; credentials: SignatureInput };
  /** Tests only: runs inside the storing transaction just before commit (throw to force a failure). */
  testHooks?: { beforeCommit?: (trx: Knex.Transaction) => Promise<void> };
}

class AlreadyIssued extends Error {
  constructor(public certificateId: number) {
    super('already issued');
  }
}

const MAX_NUMBER_ATTEMPTS = 5;

/**
 * Issues the identity certificate of a passed, verified lot. Called by the testing module
 * after the verification transaction commits. Idempotent for the automatic case: when the lot
 * already has a current certificate (and nothing is superseded) that one is returned with
 * created = false.
 */
export async function issueCertificate(
  db: Knex,
  input: IssueInput,
  opts: IssueOptions = {},
): Promise<CertificateMeta & { created: boolean }> {
  const cfg = configOf(opts.config);
  const lot = await repo.findLot(db, input.lotId);
  if (!lot) throw notFound('The lot');
  // Never an IR identity certificate for a material QA marked "identity by IR not suitable" (docs/methods.md).
  await assertIrSuitable(db, lot.material_id, 'No IR identity certificate is issued');
  let supersedes: CertificateContent['supersedes'] = null;
  if (input.supersedesId !== undefined) {
    const old = await repo.findListRow(db, input.supersedesId);
    if (!old || Number(old.lot_id) !== lot.id) throw notFound('The certificate to supersede');
    if (old.superseded_by_id)
      throw conflict(`Certificate ${old.number} is already superseded by ${old.superseded_by_number}.`);
    supersedes = {
      id: Number(old.id),
      number: old.number,
      issuedAt: new Date(old.issued_at).toISOString(),
      reason: input.reason ?? null,
    };
  } else if (lot.certificate_id) {
    const existing = await repo.findListRow(db, lot.certificate_id);
    return { ...toMeta(existing!), created: false };
  }

  for (let attempt = 1; ; attempt++) {
    const issuedAt = new Date();
    const year = yearIn(issuedAt, cfg.siteTimeZone);
    const number = formatNumber(year, (await repo.lastSequence(db, year)) + attempt);
    const prepared = await prepareCertificate(
      db,
      { lotId: input.lotId, testId: input.testId, number, issuedAt, supersedes },
      cfg,
    );
    try {
      const id = await db.transaction(async (trx) => {
        const locked = await repo.lockLot(trx, input.lotId);
        if (!locked) throw notFound('The lot');
        if (locked.identity_status !== 'passed')
          throw conflict(`Lot ${locked.lot_number} is no longer passed (status: ${locked.identity_status}).`);
        if (!supersedes && locked.certificate_id) throw new AlreadyIssued(Number(locked.certificate_id));
        if (supersedes && Number(locked.certificate_id) !== supersedes.id)
          throw conflict("Only the lot's current certificate can be superseded.");
        let signatureId: number | null = null;
        if (opts.signature) {
          const s = await recordSignature(trx, {
            user: opts.signature.user,
            credentials: opts.signature.credentials,
            meaning: 'issued',
            entityType: 'certificate',
            entityId: number,
            content: {
              number,
              sha256: prepared.sha256,
              lotNumber: locked.lot_number,
              supersedes: supersedes?.number ?? null,
            },
            statement: input.reason ?? null,
            ip: input.ip ?? null,
          });
          signatureId = s.id;
        }
        const certId = await repo.insertCertificate(trx, {
          number,
          lot_id: input.lotId,
          test_id: input.testId,
          supersedes_id: supersedes?.id ?? null,
          sha256: prepared.sha256,
          size: prepared.pdf.length,
          pdf: prepared.pdf,
          signer_fingerprint: prepared.fingerprint,
          issued_by: input.actor.id,
          issued_at: issuedAt,
          content: JSON.stringify(prepared.content),
          supersede_reason: supersedes ? (input.reason ?? null) : null,
          supersede_signature_id: signatureId,
        });
        await repo.setLotCertificate(trx, input.lotId, certId);
        const summary = {
          number,
          lotId: input.lotId,
          lotNumber: locked.lot_number,
          testId: input.testId,
          sha256: prepared.sha256,
          size: prepared.pdf.length,
          signerFingerprint: prepared.fingerprint,
          supersedes: supersedes?.number ?? null,
          containers: prepared.content.containers.length,
        };
        await appendAudit(trx, {
          actor: input.actor,
          action: 'certificate.issued',
          entityType: 'certificate',
          entityId: certId,
          after: summary,
          reason: input.reason ?? null,
          ip: input.ip ?? null,
        });
        await appendAudit(trx, {
          actor: input.actor,
          action: 'lot.certificate-recorded',
          entityType: 'lot',
          entityId: input.lotId,
          before: { certificateId: locked.certificate_id ?? null },
          after: { certificateId: certId, number },
          reason: input.reason ?? null,
          ip: input.ip ?? null,
        });
        if (supersedes) {
          await appendAudit(trx, {
            actor: input.actor,
            action: 'certificate.superseded',
            entityType: 'certificate',
            entityId: supersedes.id,
            before: { number: supersedes.number, current: true },
            after: { number: supersedes.number, current: false, supersededBy: number },
            reason: input.reason ?? null,
            ip: input.ip ?? null,
          });
        }
        await opts.testHooks?.beforeCommit?.(trx);
        return certId;
      });
      const row = await repo.findListRow(db, id);
      return { ...toMeta(row!), created: true };
    } catch (e) {
      if (e instanceof AlreadyIssued)
        return { ...toMeta((await repo.findListRow(db, e.certificateId))!), created: false };
      const err = e as { code?: string; message?: string };
      if (err.code === 'ER_DUP_ENTRY' && /number/.test(err.message ?? '') && attempt < MAX_NUMBER_ATTEMPTS) continue;
      throw e;
    }
  }
}

/** Issues the certificate of a passed lot that has none (e.g. when automatic issuing failed). */
export async function issueMissing(
  db: Knex,
  lotId: number,
  actor: Actor,
  ip: string | null,
  config?: AppConfig,
): Promise<CertificateMeta & { created: boolean }> {
  const lot = await repo.findLot(db, lotId);
  if (!lot) throw notFound('The lot');
  const testId = await latestVerifiedTest(db, lotId);
  return issueCertificate(db, { lotId, testId, actor, ip }, { config });
}

async function latestVerifiedTest(db: Knex, lotId: number): Promise<number> {
  const t = (await repo.testsOf(db, lotId)).filter((x) => x.status === 'verified').at(-1);
  if (!t) throw conflict('The lot has no verified identity test.');
  return t.id;
}

export interface SupersedeInput {
  certificateId: number;
  reason: string;
  user: AuthUser;
  credentials: SignatureInput;
  ip: string | null;
  testId?: number;
}

/** QA issues a new certificate that supersedes the lot's current one, with a reason and an e-signature. */
export async function supersedeCertificate(
  db: Knex,
  input: SupersedeInput,
  config?: AppConfig,
): Promise<CertificateMeta & { created: boolean }> {
  const old = await repo.findListRow(db, input.certificateId);
  if (!old) throw notFound('The certificate');
  if (old.superseded_by_id)
    throw conflict(`Certificate ${old.number} is already superseded by ${old.superseded_by_number}.`);
  const testId = input.testId ?? (await latestVerifiedTest(db, Number(old.lot_id)));
  await checkSignatureCredentials(db, {
    user: input.user,
    credentials: input.credentials,
    meaning: 'issued',
    entityType: 'certificate',
    entityId: old.number,
    ip: input.ip,
  });
  return issueCertificate(
    db,
    {
      lotId: Number(old.lot_id),
      testId,
      actor: { id: input.user.id, name: input.user.fullName },
      supersedesId: Number(old.id),
      reason: input.reason,
      ip: input.ip,
    },
    { config, signature: { user: input.user, credentials: input.credentials } },
  );
}

// ---------------------------------------------------------------------------------------------
// Reading
// ---------------------------------------------------------------------------------------------

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

// ---------------------------------------------------------------------------------------------
// Verification
// ---------------------------------------------------------------------------------------------

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
  if (row?.superseded_by_id)
    reasons.push(`Note: certificate ${row.number} was superseded by ${row.superseded_by_number}.`);
  const authentic = !!row && byteIdentical === true && !!signature?.valid && signedBySite === true;
  const meta = row ? toMeta(row) : null;
  const summary = authentic
    ? `Authentic: this is certificate ${row!.number} for lot ${row!.lot_number}, byte-identical to the stored copy, with a valid digital signature of the site.`
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
    action: 'certificate.verified',
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
  const r = report('upload', sha, row, row ? identical : null, verifyPdfSignature(file));
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
    const bytes = (await repo.pdfBytes(db, Number(row.id)))!;
    const sha = sha256Hex(bytes);
    r = report('number', sha, row, sha === row.sha256, verifyPdfSignature(bytes));
  }
  await auditVerification(db, actor, ip, r);
  return r;
}
