/**
 * Contract of lot receipt and the lot page: request schemas (zod), labels and response shapes.
 * Pure data and zod only: the client imports this file too, so the receipt form validates with
 * the same rules as the server.
 */
import { z } from 'zod';
import { calendarDate, multiLineText, singleLineText } from '../../lib/contract';
import type { PersonRef, SignatureRecord } from '../../lib/contract';

/** Most containers one lot may have (labels carry a 3-digit sequence). */
export const MAX_CONTAINERS = 999;

export const lotCreateSchema = z.object({
  materialId: z.number().int().positive('Choose the material grade.'),
  /** An approved source of the material (server/modules/suppliers): the supplier, and the manufacturer if named. */
  supplierId: z.number().int().positive('Choose the supplier.'),
  manufacturerId: z.number().int().positive().nullable().optional(),
  supplierLot: singleLineText().min(1, "Give the supplier's lot number.").max(80),
  containerCount: z
    .number()
    .int('The number of containers is a whole number.')
    .min(1, 'A lot has at least 1 container.')
    .max(MAX_CONTAINERS, `A lot has at most ${MAX_CONTAINERS} containers.`),
  /** Not before 2000-01-01 (a year typed wrong); a date after the site's today is refused by the service. */
  receivedDate: calendarDate('received date'),
  notes: multiLineText().max(4000).nullable().optional(),
});
export type LotCreate = z.infer<typeof lotCreateSchema>;

export const LOT_STATUSES = ['quarantine', 'released', 'rejected'] as const;
export type LotStatus = (typeof LOT_STATUSES)[number];

/** Identity status of a lot, in the order a lot normally moves through them. */
export const IDENTITY_STATUSES = [
  'awaiting-testing',
  'testing',
  'awaiting-verification',
  'passed',
  'failed',
  'retest-authorised',
  'rejected',
] as const;
export type IdentityStatus = (typeof IDENTITY_STATUSES)[number];

export const IDENTITY_STATUS_LABELS: Record<IdentityStatus, string> = {
  'awaiting-testing': 'Awaiting testing',
  testing: 'Testing',
  'awaiting-verification': 'Awaiting verification',
  passed: 'Identity passed',
  failed: 'Identity failed (investigation)',
  'retest-authorised': 'Retest authorised by QA',
  rejected: 'Rejected',
};

export const lotListQuerySchema = z.object({
  identityStatus: z.enum(IDENTITY_STATUSES).optional(),
  search: singleLineText().max(80).optional(),
});

/** State of one test attempt of a lot. */
export type TestStatus = 'in-progress' | 'awaiting-verification' | 'verified' | 'returned';
/** Result of one measurement; invalid = refused (quality), never judged. */
export type MeasurementVerdict = 'pass' | 'fail' | 'invalid';

// ------------------------------------------------------------------ response shapes

/** A material grade a lot may be received for (approved method and reference). */
export interface ReceivableMaterial {
  id: number;
  code: string;
  name: string;
  grade: string;
  /** null when QA marked the grade "identity by IR not suitable" (docs/methods.md). */
  methodVersion: number | null;
  technique: string | null;
  /** Received and labelled, but its identity is tested by the test that replaces IR, never here. */
  irNotSuitable: boolean;
}

export interface LotSummary {
  id: number;
  lotNumber: string;
  material: { id: number; code: string; name: string; grade: string };
  /** The supplier's name as stored at receipt (lots before the supplier master keep their free text). */
  supplier: string;
  /** The supplier master record (linked by migration 140 for older lots). */
  supplierId: number | null;
  manufacturer: { id: number; name: string } | null;
  /** The source's qualification status at receipt, QA's conditions, the first-delivery flag and the sampling plan. */
  source: {
    id: number | null;
    statusAtReceipt: 'new' | 'qualified' | 'conditional' | null;
    conditions: string | null;
    firstDelivery: boolean;
    samplingPlan: 'every-container' | 'sqrt-n-plus-1' | null;
    sampleCount: number | null;
  };
  supplierLot: string;
  containerCount: number;
  receivedDate: string;
  notes: string | null;
  status: LotStatus;
  identityStatus: IdentityStatus;
  /** The person who registered the lot; for a lot the ERP created, id 0 and the machine account named. */
  createdBy: PersonRef;
  /** The ERP's goods-receipt number, for a lot the ERP created. */
  erpReceiptNumber: string | null;
  createdAt: string;
  updatedAt: string;
}

export interface LotContainer {
  id: number;
  seq: number;
  label: string;
  /** The result that counts for the container (last verified attempt that covers it). */
  effective: { verdict: 'pass' | 'fail'; measurementId: number; testId: number } | null;
  /** Its latest measurement in the attempt under way. */
  current: { measurementId: number; verdict: MeasurementVerdict; matchScore: number | null } | null;
  currentInScope: boolean;
  measurements: number;
  /** quarantine, sampled, released, rejected or blocked (server/modules/sampling/contract.ts). */
  status: 'quarantine' | 'sampled' | 'released' | 'rejected' | 'blocked';
  /** Sampled under the lot's sampling record (every container for a lot received before sampling records). */
  sampled: boolean;
}

export interface LotTestSummary {
  id: number;
  attempt: number;
  status: TestStatus;
  retestOfInvestigationId: number | null;
  instrumentId: number | null;
  methodId: number;
  createdAt: string;
  performedBy: PersonRef | null;
  verifiedBy: PersonRef | null;
  returnedReason: string | null;
  measurements: number;
  signatures: SignatureRecord[];
}

export interface LotInvestigation {
  id: number;
  number: string;
  status: string;
  decision: string | null;
  openedAt: string;
  closedAt: string | null;
}

export type LotCertificateState =
  { state: 'issued'; id: number; number: string; issuedAt: string } | { state: 'pending' } | { state: 'none' };

export interface LotDetail extends LotSummary {
  containers: LotContainer[];
  /** The sampling record is signed (always true for a lot received before sampling records). */
  sampledAt: string | null;
  tests: LotTestSummary[];
  currentTestId: number | null;
  investigations: LotInvestigation[];
  certificate: LotCertificateState;
}
