/**
 * Contract of identity certificates: request schemas (zod) and response shapes (metadata, the
 * stated content, verification report). Pure data and zod only: the client imports this file too.
 */
import { z } from 'zod';
import {
  calendarDate,
  multiLineText,
  type PdfSignatureCheck,
  signatureInput,
  singleLineText,
} from '../../lib/contract';

const dateParam = calendarDate('date').optional();

export const certificateListQuery = z.object({
  lot: singleLineText().max(60).optional(),
  lotId: z.coerce.number().int().positive().optional(),
  material: singleLineText().max(120).optional(),
  number: singleLineText().max(40).optional(),
  from: dateParam,
  to: dateParam,
  limit: z.coerce.number().int().min(1).max(500).default(100),
  offset: z.coerce.number().int().min(0).default(0),
});

export const certificateNumberSchema = z
  .string()
  .trim()
  .min(1, 'Type the certificate number.')
  .max(40)
  .regex(/^IC-\d{4}-\d{5,}$/i, 'A certificate number looks like IC-2026-00042.');

export const supersedeSchema = z.object({
  reason: multiLineText().min(10, 'Give the reason for the new certificate (at least 10 characters).').max(2000),
  signature: signatureInput,
});

export const verifyByNumberQuerySchema = z.object({ number: certificateNumberSchema });
export const issueMissingSchema = z.object({ lotId: z.number().int().positive() });

/** The search of the certificate list as the client sends it (certificateListQuery without paging). */
export interface CertificateFilter {
  lot?: string;
  lotId?: number;
  material?: string;
  number?: string;
  /** YYYY-MM-DD */
  from?: string;
  /** YYYY-MM-DD */
  to?: string;
}

// ------------------------------------------------------------------ response shapes

export interface CertificateMeta {
  id: number;
  number: string;
  lotId: number;
  lotNumber: string;
  materialId: number;
  materialCode: string;
  materialName: string;
  testId: number;
  issuedAt: string;
  issuedBy: string | null;
  sha256: string;
  size: number;
  signerFingerprint: string;
  supersedes: { id: number; number: string } | null;
  supersededBy: { id: number; number: string } | null;
  /** Not superseded: the lot's valid certificate. */
  current: boolean;
  supersedeReason: string | null;
  downloadUrl: string;
}

export interface CertificateList {
  items: CertificateMeta[];
  total: number;
}

export interface SignatureLine {
  printedName: string;
  meaning: string;
  signedAt: string; // ISO, UTC
  statement: string | null;
  /** What was signed, e.g. "Identity test attempt 1". */
  record: string;
}

export interface ContainerLine {
  containerId: number;
  seq: number;
  label: string;
  measurementId: number;
  testAttempt: number;
  matchScore: number | null;
  /** Reference bands found within tolerance / reference bands; null when the method does not use bands. */
  bandsMatched: number | null;
  bandsTotal: number | null;
  verdict: string;
  rawFileSha256: string;
  rawFileName: string;
  measuredAt: string;
  bestReferenceId: number | null;
  /** 'export-folder': the file was received from the instrument's export folder (absent: uploaded by hand) */
  source?: 'export-folder';
}

export interface CertificateContent {
  number: string;
  issuedAt: string;
  site: { name: string; address: string; timeZone: string };
  verificationUrl: string;
  supersedes: { id: number; number: string; issuedAt: string; reason: string | null } | null;
  lot: {
    id: number;
    lotNumber: string;
    supplier: string;
    supplierLot: string;
    receivedDate: string; // YYYY-MM-DD
    containerCount: number;
    /**
     * Present only for a lot sampled under a validated reduced plan (issue 14 item 3): the
     * certificate covers the sampled containers and says so.
     */
    sampling?: { plan: 'sqrt-n-plus-1'; sampledCount: number; sampledLabels: string[] };
  };
  material: { id: number; code: string; name: string; grade: string; monographRef: string };
  tests: { id: number; attempt: number }[];
  testId: number;
  methods: {
    id: number;
    version: number;
    technique: string;
    rangeFrom: number | null;
    rangeTo: number | null;
    minCorrelation: number | null;
    approval: SignatureLine | null;
  }[];
  references: { id: number; code: string; supplier: string; supplierLot: string; approval: SignatureLine | null }[];
  instruments: {
    id: number;
    name: string;
    serialNumber: string;
    technique: string;
    sampling: string;
    location: string;
  }[];
  instrumentChecks: {
    id: number;
    instrumentId: number;
    instrumentName: string;
    verdict: string;
    performedAt: string;
    validUntil: string | null;
    spec: string;
    signature: SignatureLine | null;
  }[];
  containers: ContainerLine[];
  signatures: SignatureLine[];
  engineVersions: string[];
  signingFingerprint: string;
}

export interface CertificateDetail extends CertificateMeta {
  content: CertificateContent | null;
}

export interface VerificationReport {
  /** 'authentic' only when the file is the stored certificate byte for byte and its signature verifies with the site's certificate. */
  verdict: 'authentic' | 'not authentic';
  summary: string;
  reasons: string[];
  checkedBy: 'upload' | 'number';
  fileSha256: string | null;
  /** The stored certificate the file was compared with (found by hash, else by the number it carries). */
  certificate: CertificateMeta | null;
  byteIdentical: boolean | null;
  signature: PdfSignatureCheck | null;
  /** The signing certificate is the one recorded when the certificate was issued. */
  signedBySite: boolean | null;
  lot: { id: number; lotNumber: string; materialCode: string; materialName: string } | null;
}

/** A passed lot still waiting for its certificate (QA's work queue; docs/certificates.md). */
export interface PendingCertificate {
  lotId: number;
  lotNumber: string;
  material: string;
  /** The reserved number, or null when none is reserved yet. */
  number: string | null;
  /** A superseding certificate (only QA can retry it, with a signature). */
  supersedes: boolean;
  reservedAt: string | null;
  failures: number;
  lastProblem: string | null;
  lastFailedAt: string | null;
}
