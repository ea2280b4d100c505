/**
 * Issuing identity certificates (docs/certificates.md, "Numbers" and "When issuing fails"):
 *
 * 1. reserve the number (numbering.ts: a short transaction on the lot and the year's counter);
 * 2. render, sign and time-stamp the PDF (render.ts), outside every transaction and lock;
 * 3. store it in ONE short transaction: certificate row with the bytes and their SHA-256, the
 *    lot's pointer to its current certificate, the audit events (and QA's signature when it
 *    supersedes), retried whole after a deadlock or a Galera certification failure.
 *
 * When step 2 or 3 fails, the reservation stays open and the failure is recorded (one sentence,
 * never the PDF or an SQL statement with its bytes); the lot appears in QA's work queue with a
 * retry action, and the background retry (retry.ts) issues it with the same number. A
 * certificate is never regenerated over an old one: a superseding certificate is a new row that
 * references the one it replaces; both stay readable.
 */
import type { Knex } from 'knex';
import { appendAudit, type Actor } from '../../lib/audit';
import type { AppConfig } from '../../lib/config';
import { must } from '../../lib/db';
import { conflict, notFound } from '../../lib/errors';
import type { SignatureInput } from '../../lib/contract';
import { checkSignatureCredentials, recordSignature } from '../../lib/esign';
import type { AuthUser } from '../../lib/http';
import { transactionWithRetry } from '../../lib/retry';
import { assertIrSuitable } from '../library';
import { configOf } from './config';
import type { CertificateContent, CertificateMeta } from './contract';
import { toMeta } from './meta';
import { AlreadyIssued, reserveNumber, type Reservation } from './numbering';
import { prepareCertificate, type PreparedCertificate } from './render';
import * as repo from './repo';

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

/**
 * A failure as one sentence for the failure record and the log: the database's own message for a
 * database error (never knex's message, which starts with the statement and its bound values,
 * here the PDF bytes), the first line of anything else, cut to 300 characters.
 */
export function failureSentence(e: unknown): string {
  const err = e as { sqlMessage?: string; code?: string; message?: string } | null;
  const text = err?.sqlMessage
    ? `database error ${err.code ?? ''}: ${err.sqlMessage}`
    : String(err?.message ?? e).split('\n')[0];
  return text.length > 300 ? `${text.slice(0, 297)}...` : text;
}

async function recordFailure(db: Knex, reservation: Reservation, actor: Actor, e: unknown): Promise<void> {
  const problem = failureSentence(e);
  await transactionWithRetry(db, async (trx) => {
    await trx('certificate_issue_failure').insert({
      number_id: reservation.id,
      lot_id: reservation.lotId,
      problem,
      failed_at: new Date(),
    });
    await appendAudit(trx, {
      actor,
      action: 'certificate.issue-failed',
      entityType: 'lot',
      entityId: reservation.lotId,
      after: { number: reservation.number, problem },
    });
  }).catch((err) =>
    console.error(`[certificate] ${reservation.number}: the failure could not be recorded: ${failureSentence(err)}`),
  );
  console.error(`[certificate] ${reservation.number} for lot ${reservation.lotId} not issued: ${problem}`);
}

/**
 * Issues the identity certificate of a passed, verified lot. Called by the testing module after
 * the verification transaction commits, by QA's retry and by the background retry. Idempotent
 * for the automatic case: when the lot already has a current certificate (and nothing is
 * superseded) that one is returned with created = false.
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
  if (lot.identity_status !== 'passed')
    throw conflict(`Lot ${lot.lot_number} has not passed identity (status: ${lot.identity_status}).`);

  let reservation: Reservation;
  try {
    reservation = await reserveNumber(db, {
      lotId: input.lotId,
      testId: input.testId,
      supersedesId: supersedes?.id ?? null,
      actor: input.actor,
      timeZone: cfg.siteTimeZone,
    });
  } catch (e) {
    if (e instanceof AlreadyIssued)
      return {
        ...toMeta(must(await repo.findListRow(db, e.certificateId), `Certificate ${e.certificateId}`)),
        created: false,
      };
    throw e;
  }

  let prepared: PreparedCertificate;
  const issuedAt = new Date();
  try {
    prepared = await prepareCertificate(
      db,
      { lotId: input.lotId, testId: reservation.testId, number: reservation.number, issuedAt, supersedes },
      cfg,
    );
  } catch (e) {
    await recordFailure(db, reservation, input.actor, e);
    throw e;
  }

  try {
    const id = await transactionWithRetry(db, (trx) =>
      store(trx, input, opts, reservation, prepared, issuedAt, supersedes),
    );
    const row = await repo.findListRow(db, id);
    return { ...toMeta(row!), created: true };
  } catch (e) {
    if (e instanceof AlreadyIssued)
      return {
        ...toMeta(must(await repo.findListRow(db, e.certificateId), `Certificate ${e.certificateId}`)),
        created: false,
      };
    await recordFailure(db, reservation, input.actor, e);
    throw e;
  }
}

async function store(
  trx: Knex.Transaction,
  input: IssueInput,
  opts: IssueOptions,
  reservation: Reservation,
  prepared: PreparedCertificate,
  issuedAt: Date,
  supersedes: CertificateContent['supersedes'],
): Promise<number> {
  const number = reservation.number;
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
    test_id: reservation.testId,
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
    testId: reservation.testId,
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
}

/** Issues the certificate of a passed lot that has none (QA's retry action; the background retry). */
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

export async function latestVerifiedTest(db: Knex, lotId: number): Promise<number> {
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
