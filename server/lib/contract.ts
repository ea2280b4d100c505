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

/**
 * Roles whose grant a second administrator confirms (two-person rule, docs/access.md): QA
 * managers approve references and decide investigations, verifiers sign the second-person
 * review, administrators grant roles.
 */
export const CONFIRMED_ROLES: readonly Role[] = ['qa_manager', 'verifier', 'admin'];

/** A role list in one canonical form (the order of ROLES, no repeats), as stored in the database. */
export function canonicalRoles(roles: readonly Role[]): Role[] {
  return ROLES.filter((r) => roles.includes(r));
}

/** Why a set of roles cannot be held by one account, or null. */
export function roleCombinationProblem(roles: readonly Role[]): string | null {
  if (roles.includes('admin') && roles.length > 1)
    return 'The administrator role cannot be combined with another role: an administrator manages accounts and signs no GMP record. Use a second account for the other work.';
  return null;
}

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
  'role-change-confirmed',
  'integrity-reviewed',
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
