/**
 * Contract of identity testing and verification: request schemas (zod), labels
 * and response shapes. Pure data and zod only: the client imports this file too.
 */
import { z } from 'zod';
import {
  multiLineText,
  type PersonRef,
  signatureInput,
  type SignatureRecord,
  singleLineText,
} from '../../lib/contract';
import type { RecordIntegrity } from '../integrity/contract';
import type { ReviewMeasurementEntry } from '../provenance/contract';
import type { IdentityStatus, LotStatus, LotSummary, MeasurementVerdict, TestStatus } from '../lots/contract';

export type { MeasurementVerdict, TestStatus } from '../lots/contract';

export const startTestSchema = z.object({
  instrumentId: z.number().int().positive('Choose an instrument.'),
});

export const switchInstrumentSchema = startTestSchema;

/** Multi-file upload, step 1: match file names to containers (stores nothing). */
export const matchFilesSchema = z.object({
  fileNames: z.array(singleLineText().min(1).max(255)).min(1, 'Choose at least one file.').max(999),
});

/** Multipart fields of a measurement upload besides the file: which container (id or scanned label). */
export const measurementFieldsSchema = z
  .object({
    containerId: z.coerce.number().int().positive().optional(),
    label: singleLineText().max(60).optional(),
    /** why a container with a valid result is measured again (required then; audited) */
    reason: multiLineText().max(1000).optional(),
    /** the operator confirms a file whose own title or sample identifier names another record */
    confirmIdentifiers: z
      .union([z.boolean(), z.enum(['true', 'false'])])
      .optional()
      .transform((v) => v === true || v === 'true'),
  })
  .refine((v) => v.containerId !== undefined || (v.label ?? '') !== '', {
    message: 'Say which container this spectrum belongs to (container or label).',
  });

export const performSchema = z.object({ signature: signatureInput });

export const verifySchema = z.object({
  signature: signatureInput,
  comment: multiLineText().max(2000).optional(),
});

export const returnSchema = z.object({
  reason: multiLineText().min(10, 'Say why the test goes back (at least 10 characters).').max(2000),
  signature: signatureInput,
});

export const TEST_STATUS_LABELS = {
  'in-progress': 'In progress',
  'awaiting-verification': 'Awaiting verification',
  verified: 'Verified',
  returned: 'Returned to the operator',
} as const;

export type MatchStatus =
  | 'matched'
  | 'no-label'
  | 'several-labels'
  | 'unknown-label'
  | 'other-lot'
  | 'not-in-scope'
  | 'not-sampled'
  | 'duplicate'
  | 'failed-needs-qa';

export const MATCH_STATUS_TEXT: Record<MatchStatus, string> = {
  matched: 'Ready',
  'no-label': 'No container label in the file name',
  'several-labels': 'The file name holds more than one container label',
  'unknown-label': 'No container has this label',
  'other-lot': 'The label belongs to another lot',
  'not-in-scope': 'This container is not part of this test attempt',
  'not-sampled': 'This container was not sampled (sampling record of the lot); it cannot be measured',
  duplicate: 'Another chosen file names the same container',
  'failed-needs-qa': 'This container failed; a retest needs QA authorisation through an investigation',
};

// ------------------------------------------------------------------ response shapes

/** A measurement with its container label, file facts and author (no result JSON, no bytes). */
export interface MeasurementSummary {
  id: number;
  testId: number;
  containerId: number;
  label: string;
  verdict: MeasurementVerdict;
  matchScore: number | null;
  file: { id: number; name: string; sha256: string; size: number };
  instrumentId: number;
  instrumentCheckId: number;
  methodId: number;
  referenceIds: number[];
  engineVersion: string;
  authorisedByInvestigationId: number | null;
  createdBy: PersonRef;
  createdAt: string;
}

export interface MethodRef {
  id: number;
  version: number;
  technique: string;
  status: string;
}

export interface InstrumentRef {
  id: number;
  name: string;
  serialNumber: string;
  technique: string;
  sampling: string;
}

export interface TestDetail {
  id: number;
  lot: {
    id: number;
    lotNumber: string;
    material: LotSummary['material'];
    status: LotStatus;
    identityStatus: IdentityStatus;
    containerCount: number;
  };
  attempt: number;
  status: TestStatus;
  statusLabel: string;
  method: MethodRef | null;
  instrument: InstrumentRef | null;
  retestOfInvestigationId: number | null;
  createdBy: PersonRef;
  createdAt: string;
  performedBy: PersonRef | null;
  verifiedBy: PersonRef | null;
  returnedReason: string | null;
  signatures: SignatureRecord[];
  readiness: { ready: boolean; missing: string[]; invalid: string[]; measured: number; inScope: number };
  measurerIds: number[];
  containers: {
    id: number;
    seq: number;
    label: string;
    inScope: boolean;
    latest: MeasurementSummary | null;
    measurements: MeasurementSummary[];
  }[];
}

/** One criterion of an identity result, with value, limit and verdict. */
export interface Criterion {
  key:
    | 'correlation'
    | 'derivative-correlation'
    | 'band-concordance'
    | 'relative-intensity'
    | 'extra-bands'
    | 'mahalanobis'
    | 'residual'
    | 'reference-model';
  /** Plain-words name, e.g. "Correlation coefficient (r) with the reference". */
  name: string;
  value: number;
  limit: number;
  comparison: '>=' | '<=';
  verdict: 'pass' | 'fail';
  /** Reference the value was computed against; null for criteria on the whole set. */
  referenceId: string | null;
}

export interface BandRow {
  referenceBand: number;
  /** Nearest sample band within the search window, or null when none. */
  sampleBand: number | null;
  /** sampleBand - referenceBand, cm-1, or null. */
  shift: number | null;
  /** Allowed |shift| for this band, cm-1. */
  tolerance: number;
  /** Since engine 2.0.0: the method's positional tolerance at this band, cm-1. */
  positionTolerance?: number;
  /** Since engine 2.0.0: full width at half height of the reference band, cm-1, when known. */
  referenceWidth?: number | null;
  /** Since engine 2.0.0: the tolerance was widened because the reference band is broad. */
  widened?: boolean;
  /** Since engine 2.0.0: the rule that set the tolerance, in words. */
  toleranceRule?: string;
  withinTolerance: boolean;
  assignment: string;
  referenceProminence: number | null;
  sampleProminence: number | null;
  /** Since engine 2.0.0, when the method compares relative band intensities (fractions of the strongest band). */
  intensity?: {
    reference: number;
    sample: number | null;
    difference: number | null;
    tolerance: number;
    verdict: 'pass' | 'fail' | 'not-compared';
  };
}

export interface ExtraBand {
  position: number;
  prominence: number;
  width: number;
  assignment: string;
}

export interface ReferenceScore {
  referenceId: string;
  referenceLabel?: string;
  materialId: string | null;
  verdict: 'pass' | 'fail';
  correlation: number;
  derivativeCorrelation: number | null;
  criteria: Criterion[];
  bands: BandRow[];
  extraBands: ExtraBand[];
}

/** A closest approved material of the mix-up hint. */
export interface HintEntry {
  materialId: number;
  materialCode: string;
  materialName: string;
  referenceCode: string;
  score: number;
  isTestedMaterial: boolean;
}

/** What a measurement row keeps as its result: the engine's result plus the mix-up hint and the file's reading notes. */
export interface StoredResult {
  /** pass only if every criterion passes against at least one reference; invalid = refused measurement. */
  verdict: MeasurementVerdict;
  engineVersion: string;
  quality: {
    ok: boolean;
    problems: { code: string; message: string; advice: string }[];
    metrics: { bandHeight: number; maxAbsorbance: number; flatTopPoints: number; noise: number; signalToNoise: number };
  };
  bestReferenceId: string | null;
  criteria: Criterion[];
  references: ReferenceScore[];
  bands: BandRow[];
  extraBands: ExtraBand[];
  distance: {
    value: number;
    components: number;
    references: number;
    /** Since engine 2.0.0: spectral residual (Q), its limit from the references and q / limit. */
    residual?: { q: number; limit: number; ratio: number; confidence: number } | null;
  } | null;
  /** Since engine 2.0.0: why the reference-set model the method asks for could not be built. */
  referenceModelProblems?: string[];
  explanation: string[];
  libraryHint: HintEntry[] | null;
  libraryHintText: string | null;
  sampleMeta: {
    title: string;
    format: string;
    originalXUnits: string;
    originalYUnits: string;
    points: number;
    warnings: string[];
  };
}

export interface ReferenceRef {
  id: number;
  code: string;
  status: string;
  approvedAt: string | null;
  material: { code: string; name: string };
}

/** An instrument check as a measurement cites it. */
export interface CitedInstrumentCheck {
  id: number;
  specId: number;
  verdict: 'pass' | 'fail';
  performedAt: string;
  validUntil: string | null;
  performedBy: number;
  engineVersion: string;
}

export interface MeasurementDetail extends MeasurementSummary {
  result: StoredResult | null;
  method: MethodRef | null;
  references: ReferenceRef[];
  instrument: InstrumentRef | null;
  instrumentCheck: CitedInstrumentCheck | null;
}

export interface MeasurementPlotData {
  measurementId: number;
  raw: { x: number[]; y: number[]; yKind: string; title: string };
  /** Sample, best reference and their difference on the method grid; NaN (null in JSON) where excluded. */
  overlay: {
    x: number[];
    sample: (number | null)[];
    reference: (number | null)[];
    difference: (number | null)[];
    referenceCode: string;
  } | null;
  excludedRegions: { from: number; to: number; label: string }[];
}

/** Whether an instrument may be used for an identity test now, with the operator's sentence why not. */
export interface InstrumentStatus {
  instrument: {
    id: number;
    name: string;
    serialNumber: string;
    technique: string;
    sampling: string;
    location: string;
    active: boolean;
  };
  check: (CitedInstrumentCheck & { result: unknown }) | null;
  usable: boolean;
  /** Why it may not be used, as a sentence for the operator; null when usable. */
  reason: string | null;
}

export interface MatchRow {
  fileName: string;
  status: MatchStatus;
  label: string | null;
  containerId: number | null;
}

export interface UploadResult {
  id: number;
  containerId: number;
  label: string;
  verdict: MeasurementVerdict;
  matchScore: number | null;
  result: StoredResult;
}

export interface StartedTest {
  id: number;
  attempt: number;
}

export interface ReviewData {
  /** the files this review shows, hashed as served, the test's signatures re-checked, and the alerts on it */
  integrity: RecordIntegrity;
  test: TestDetail;
  measurements: MeasurementDetail[];
  /** every measurement of the attempt in order, including invalid and superseded ones (docs/provenance.md) */
  history: ReviewMeasurementEntry[];
  instrumentChecks: CitedInstrumentCheck[];
  /** The identity method versions the measurements used (params as stored with the version). */
  methods: { id: number; version: number; technique: string; approvedAt: string | null; params: unknown }[];
  references: ReferenceRef[];
  /** The method version and reference set the attempt started with and keeps (null: started before pins). */
  pinned: AttemptPin | null;
}

export interface AttemptPin {
  methodId: number;
  methodVersion: number;
  referenceCodes: string[];
  /** The version approved now, when another than the pinned one: it applies to new attempts only. */
  newerApprovedVersion: number | null;
}

export interface QueueTest {
  testId: number;
  lotId: number;
  lotNumber: string;
  material: string;
  attempt: number;
  isRetest: boolean;
  containers: number;
  failing: number;
  performedBy: string;
  signedPerformedAt: string;
}

export interface VerifyOutcome {
  outcome: 'passed' | 'failed';
  investigation: { id: number; number: string } | null;
  certificate: 'issued' | 'pending' | null;
}

// The work queue's response types live in its own module's contract (server/modules/work-queue).
export type { QueueItem, QueueSection, WorkQueue } from '../work-queue/contract';
