/**
 * The cross-cutting part of the contract between client and server (DEVELOPERS.md,
 * "Contracts"): roles, e-signature input and record, the audit chain report and the PDF signature
 * check. A contract file imports only zod and other contract files; the client imports it too.
 */
import { z } from 'zod';

/** The five roles of Drumline. */
export const ROLES = ['operator', 'verifier', 'qa_manager', 'auditor', 'admin'] as const;
export type Role = (typeof ROLES)[number];

export const ROLE_LABELS: Record<Role, string> = {
  operator: 'Operator',
  verifier: 'Verifier',
  qa_manager: 'QA manager',
  auditor: 'Auditor',
  admin: 'Administrator',
};

/** The meanings an e-signature can carry (21 CFR 11.50). */
export const SIGNATURE_MEANINGS = [
  'performed',
  'verified',
  'returned',
  'approved',
  'approved-with-justification',
  'retired',
  'instrument-check',
  'phase-1-recorded',
  'result-invalidated',
  'failure-confirmed',
  'issued',
] as const;
export type SignatureMeaning = (typeof SIGNATURE_MEANINGS)[number];

/** The signature part of a request body: the password again, the user name at first signing. */
export const signatureInput = z.object({
  password: z.string().min(1, 'Enter your password to sign.').max(200),
  username: z.string().max(64).optional(),
});
export type SignatureInput = z.infer<typeof signatureInput>;

/** An e-signature as every record that carries one shows it. */
export interface SignatureRecord {
  id: number;
  userId: number;
  printedName: string;
  meaning: string;
  signedAt: string;
  contentHash: string;
  statement: string | null;
}

/** The result of walking the audit hash chain. */
export type ChainReport =
  | { ok: true; events: number; lastHash: string; lastId: number }
  | { ok: false; events: number; brokenAt: number; problem: string; expected?: string; found?: string };

/** What a check of a PDF's digital signature found. */
export interface PdfSignatureCheck {
  /** The file carries a PDF signature (ByteRange + Contents) with a CMS SignedData. */
  signed: boolean;
  /** Digest, signing-certificate-v2 binding and RSA signature all verify, and the whole file is covered. */
  valid: boolean;
  signerSubject: string | null;
  /** SHA-256 of the embedded signer certificate, lower-case hex. */
  fingerprint: string | null;
  subFilter: string | null;
  signingTime: string | null;
  coversWholeFile: boolean;
  hasSigningCertificateV2: boolean;
  problem?: string;
}

/** The site's certificate that signs identity certificates. */
export interface SigningIdentity {
  /** SHA-256 of the DER certificate, lower-case hex. */
  fingerprint: string;
  subject: string;
  issuer: string;
  serialNumber: string;
  notBefore: string;
  notAfter: string;
  source: 'configured' | 'generated';
}

/** An `{ id }` reference with a display name, e.g. who performed a test. */
export interface PersonRef {
  id: number;
  name: string;
}
