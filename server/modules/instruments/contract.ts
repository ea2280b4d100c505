/**
 * Contract of the instrument registry: request schemas (zod), labels and response shapes. Pure
 * data and zod only: the client imports this file too.
 */
import { z } from 'zod';
import { calendarDate, multiLineText, signatureInput, type SignatureRecord, singleLineText } from '../../lib/contract';

export const INSTRUMENT_TECHNIQUES = ['mid-ir', 'nir'] as const;
export const SAMPLINGS = ['atr', 'transmission', 'diffuse-reflectance'] as const;
export const SAMPLING_LABELS: Record<(typeof SAMPLINGS)[number], string> = {
  atr: 'ATR',
  transmission: 'Transmission',
  'diffuse-reflectance': 'Diffuse reflectance',
};

export const instrumentCreateSchema = z.object({
  name: singleLineText().min(2).max(120),
  serialNumber: singleLineText().min(1).max(80),
  technique: z.enum(INSTRUMENT_TECHNIQUES),
  sampling: z.enum(SAMPLINGS),
  location: singleLineText().max(160).default(''),
  checkValidityHours: z
    .number()
    .int()
    .min(1)
    .max(24 * 31)
    .default(24),
  reason: multiLineText().max(2000).optional(),
});
export type InstrumentCreate = z.infer<typeof instrumentCreateSchema>;
/** What a client sends to register an instrument (defaults not yet applied). */
export type InstrumentCreateInput = z.input<typeof instrumentCreateSchema>;

export const instrumentUpdateSchema = z.object({
  name: singleLineText().min(2).max(120).optional(),
  serialNumber: singleLineText().min(1).max(80).optional(),
  sampling: z.enum(SAMPLINGS).optional(),
  location: singleLineText().max(160).optional(),
  checkValidityHours: z
    .number()
    .int()
    .min(1)
    .max(24 * 31)
    .optional(),
  active: z.boolean().optional(),
  reason: multiLineText().min(3, 'Give a reason (at least 3 characters).').max(2000),
});
export type InstrumentUpdate = z.infer<typeof instrumentUpdateSchema>;

export const checkBandSchema = z.object({
  nominal: z.number().finite().positive().max(15000),
  tolerance: z.number().finite().gt(0).max(20),
});
/** A band of a check specification: nominal position and tolerance, cm-1. */
export type CheckBand = z.infer<typeof checkBandSchema>;

export const SPEC_KINDS = ['pharmacopoeia-ft', 'pharmacopoeia-monochromator', 'site'] as const;
export type SpecKind = (typeof SPEC_KINDS)[number];

/**
 * The kinds of instrument check. polystyrene: wavenumber scale (Ph. Eur. 2.2.24; NIR sites use
 * their own positions); atr-blank: the clean crystal shows no band above a limit (carry-over);
 * noise: RMS noise about a line in a quiet region; nir-wavelength: band positions of the site's
 * wavelength standard against its certificate (Ph. Eur. 2.2.40, USP <856>); nir-photometric-noise:
 * the reference measured against itself (Ph. Eur. 2.2.40, USP <856>).
 */
export const CHECK_TYPES = ['polystyrene', 'atr-blank', 'noise', 'nir-wavelength', 'nir-photometric-noise'] as const;
export type CheckType = (typeof CHECK_TYPES)[number];
export const CHECK_TYPE_LABELS: Record<CheckType, string> = {
  polystyrene: 'Wavenumber scale (polystyrene)',
  'atr-blank': 'ATR blank (clean crystal)',
  noise: 'Noise figure',
  'nir-wavelength': 'NIR wavelength accuracy',
  'nir-photometric-noise': 'NIR photometric noise',
};

/** Which instruments a check type applies to. */
export function checkTypeFits(type: CheckType, instrument: { technique: string; sampling: string }): boolean {
  switch (type) {
    case 'polystyrene':
      return true;
    case 'atr-blank':
      return instrument.technique === 'mid-ir' && instrument.sampling === 'atr';
    case 'noise':
      return instrument.technique === 'mid-ir';
    default:
      return instrument.technique === 'nir';
  }
}

const region = z
  .object({ from: z.number().finite().min(0).max(15000), to: z.number().finite().min(0).max(15000) })
  .refine((r) => r.to > r.from, { message: 'A region ends above where it starts.' });

export const blankLimitsSchema = z.object({
  maxAbsorbance: z.number().finite().gt(0).max(1),
  range: region,
  excluded: z.array(region).max(10).default([]),
});
export const noiseLimitsSchema = z.object({
  region,
  maxRms: z.number().finite().gt(0).max(1),
  maxPeakToPeak: z.number().finite().gt(0).max(1).nullable().optional(),
});
export const wavelengthLimitsSchema = z.object({
  standard: singleLineText().min(3, 'Name the standard and its certificate.').max(200),
  bands: z
    .array(z.object({ nominal: z.number().finite().min(700).max(2600), tolerance: z.number().finite().gt(0).max(5) }))
    .min(3, 'Enter at least three certified positions.')
    .max(20),
  searchWindow: z.number().finite().gt(0).max(20).optional(),
});
export const photometricNoiseLimitsSchema = z
  .object({
    fromNm: z.number().finite().min(700).max(2600),
    toNm: z.number().finite().min(700).max(2600),
    segmentNm: z.number().finite().min(10).max(500).optional(),
    maxMeanRms: z.number().finite().gt(0).max(1),
  })
  .refine((r) => r.toNm > r.fromNm, { message: 'The range ends above where it starts.', path: ['toNm'] });

export type BlankLimits = z.infer<typeof blankLimitsSchema>;
export type NoiseLimits = z.infer<typeof noiseLimitsSchema>;
export type WavelengthLimits = z.infer<typeof wavelengthLimitsSchema>;
export type PhotometricNoiseLimits = z.infer<typeof photometricNoiseLimitsSchema>;
export type CheckLimits = BlankLimits | NoiseLimits | WavelengthLimits | PhotometricNoiseLimits;

export const LIMITS_SCHEMAS = {
  'atr-blank': blankLimitsSchema,
  noise: noiseLimitsSchema,
  'nir-wavelength': wavelengthLimitsSchema,
  'nir-photometric-noise': photometricNoiseLimitsSchema,
} as const;

export const specCreateSchema = z
  .object({
    checkType: z.enum(CHECK_TYPES).default('polystyrene'),
    kind: z.enum(SPEC_KINDS),
    /** Required for kind "site"; ignored for the pharmacopoeial kinds (their table is used). */
    bands: z.array(checkBandSchema).min(3).max(20).optional(),
    /** The limits of a check type other than polystyrene (validated by LIMITS_SCHEMAS). */
    limits: z.unknown().optional(),
    justification: multiLineText().min(20, 'Write a justification of at least 20 characters.').max(4000),
  })
  .superRefine((s, ctx) => {
    if (s.checkType === 'polystyrene') {
      if (s.kind === 'site' && !(s.bands && s.bands.length >= 3))
        ctx.addIssue({ code: 'custom', message: 'A site specification needs at least three bands.', path: ['bands'] });
      return;
    }
    if (s.kind !== 'site')
      ctx.addIssue({
        code: 'custom',
        message: 'Only the polystyrene check has a pharmacopoeial table; other checks take site limits.',
        path: ['kind'],
      });
    const r = LIMITS_SCHEMAS[s.checkType].safeParse(s.limits);
    if (!r.success)
      for (const i of r.error.issues)
        ctx.addIssue({ code: 'custom', message: i.message, path: ['limits', ...i.path.map(String)] });
  });
export type SpecCreate = z.infer<typeof specCreateSchema>;
/** What a client sends to approve a specification (defaults not yet applied). */
export type SpecCreateInput = z.input<typeof specCreateSchema>;

export const specApprovalSchema = z.object({ spec: specCreateSchema, signature: signatureInput });
export type SpecApproval = z.infer<typeof specApprovalSchema>;

/** Multipart fields of a check upload besides the file: the check type and the performer's signature. */
export const checkUploadFieldsSchema = signatureInput.extend({ checkType: z.enum(CHECK_TYPES).default('polystyrene') });

export const QUALIFICATION_STAGES = ['iq', 'oq', 'pq', 'requalification'] as const;
export const QUALIFICATION_STAGE_LABELS: Record<(typeof QUALIFICATION_STAGES)[number], string> = {
  iq: 'Installation qualification (IQ)',
  oq: 'Operational qualification (OQ)',
  pq: 'Performance qualification (PQ)',
  requalification: 'Requalification',
};
export const QUALIFICATION_STATUSES = ['passed', 'passed-with-deviations', 'failed'] as const;

export const qualificationSchema = z
  .object({
    stage: z.enum(QUALIFICATION_STAGES),
    documentRef: singleLineText().min(3, 'Give the document reference.').max(160),
    executedFrom: calendarDate('start date'),
    executedTo: calendarDate('end date'),
    status: z.enum(QUALIFICATION_STATUSES),
    nextDue: calendarDate('next due date').nullable().optional(),
    summary: multiLineText().min(10, 'Summarise the outcome in at least 10 characters.').max(4000),
    signature: signatureInput,
  })
  .refine((q) => q.executedTo >= q.executedFrom, {
    message: 'The end date is before the start date.',
    path: ['executedTo'],
  });
export type QualificationInput = z.infer<typeof qualificationSchema>;

export const MAINTENANCE_KINDS = ['preventive', 'repair', 'part-replaced', 'software', 'other'] as const;
export const maintenanceSchema = z.object({
  kind: z.enum(MAINTENANCE_KINDS),
  performedOn: calendarDate('maintenance date'),
  performedBy: singleLineText().min(2, 'Name who did the work.').max(160),
  description: multiLineText().min(10, 'Describe the work in at least 10 characters.').max(4000),
});
export type MaintenanceInput = z.infer<typeof maintenanceSchema>;

export const outOfServiceSchema = z.object({
  reason: multiLineText().min(10, 'Give a reason of at least 10 characters.').max(2000),
});
export const backInServiceSchema = z.object({
  reason: multiLineText().min(10, 'Give a reason of at least 10 characters.').max(2000),
  signature: signatureInput,
});

export const IMPACT_DECISIONS = ['none', 'retest'] as const;
export const impactDecisionSchema = z
  .object({
    decision: z.enum(IMPACT_DECISIONS),
    /** Container ids to retest (decision "retest"): every one must be among the listed measurements. */
    retestContainerIds: z.array(z.number().int().positive()).max(500).default([]),
    rationale: multiLineText().min(20, 'Write a rationale of at least 20 characters.').max(4000),
    signature: signatureInput,
  })
  .refine((d) => d.decision !== 'retest' || d.retestContainerIds.length > 0, {
    message: 'Name the containers to retest.',
    path: ['retestContainerIds'],
  })
  .refine((d) => d.decision !== 'none' || d.retestContainerIds.length === 0, {
    message: 'A decision of no impact names no containers.',
    path: ['retestContainerIds'],
  });
export type ImpactDecisionInput = z.infer<typeof impactDecisionSchema>;
export const impactListQuerySchema = z.object({ status: z.enum(['open', 'assessed']).optional() });

export const checkParamsSchema = z.object({
  id: z.coerce.number().int().positive(),
  checkId: z.coerce.number().int().positive(),
});

// ------------------------------------------------------------------ response shapes

export interface Instrument {
  id: number;
  name: string;
  serialNumber: string;
  technique: string;
  sampling: string;
  location: string;
  checkValidityHours: number;
  active: boolean;
  serviceState: 'in-service' | 'out-of-service';
  createdBy: number;
  createdAt: string;
  updatedAt: string;
}

/** Whether an instrument's check is due, its valid and its last check, and the specification in force. */
export interface InstrumentCheckState {
  checkDue: boolean;
  validCheck: { id: number; performedAt: string; validUntil: string } | null;
  lastCheck: {
    id: number;
    verdict: 'pass' | 'fail';
    performedAt: string;
    validUntil: string | null;
    performedByName: string | null;
  } | null;
  currentSpec: { id: number; version: number; kind: string } | null;
  /** Every check type this instrument requires, each with whether a valid check is in force. */
  required: { checkType: CheckType; valid: boolean; lastVerdict: 'pass' | 'fail' | null; validUntil: string | null }[];
}

export type InstrumentListItem = Instrument & InstrumentCheckState;

export interface CheckSpec {
  id: number;
  instrumentId: number;
  checkType: CheckType;
  version: number;
  kind: string;
  limits: CheckLimits | null;
  bands: CheckBand[];
  justification: string | null;
  status: 'draft' | 'approved' | 'superseded';
  createdBy: number;
  createdAt: string;
  approvedSignatureId: number | null;
}

export interface CheckSpecView extends CheckSpec {
  createdByName: string | null;
  signature: SignatureRecord | null;
}

/** One band of a polystyrene check as the engine judged it. */
export interface PolystyreneBandResult {
  nominal: number;
  /** Sub-grid position of the band maximum, or null when no maximum lies in the window. */
  found: number | null;
  deviation: number | null;
  tolerance: number;
  ok: boolean;
}

/** The stored result of a polystyrene check (the engine's PolystyreneResult as JSON). */
export interface CheckResult {
  verdict: 'pass' | 'fail';
  spec: string;
  mode: 'transmission' | 'atr';
  bands: PolystyreneBandResult[];
  resolution: {
    applicable: boolean;
    reason: string | null;
    checks: { name: string; value: number; limit: number; ok: boolean }[];
    ok: boolean;
  };
  engineVersion: string;
}

export interface InstrumentCheck {
  id: number;
  instrumentId: number;
  checkType: CheckType;
  specId: number;
  fileId: number;
  result: AnyCheckResult;
  verdict: 'pass' | 'fail';
  engineVersion: string;
  performedBy: number;
  performedAt: string;
  validUntil: string | null;
  signatureId: number | null;
}

export interface InstrumentCheckView extends InstrumentCheck {
  performedByName: string | null;
  signature: SignatureRecord | null;
}

/** Stored result of an ATR blank check (the engine's BlankResult as JSON). */
export interface BlankCheckResult {
  check: 'atr-blank';
  verdict: 'pass' | 'fail';
  limit: number;
  baseline: number;
  largest: { position: number; height: number } | null;
  bandsAboveLimit: { position: number; height: number }[];
  pointsChecked: number;
  engineVersion: string;
}
export interface NoiseCheckResult {
  check: 'noise';
  verdict: 'pass' | 'fail';
  rms: number;
  peakToPeak: number;
  limitRms: number;
  limitPeakToPeak: number | null;
  pointsChecked: number;
  engineVersion: string;
}
export interface WavelengthCheckResult {
  check: 'nir-wavelength';
  verdict: 'pass' | 'fail';
  standard: string;
  bands: { nominal: number; found: number | null; deviation: number | null; tolerance: number; ok: boolean }[];
  engineVersion: string;
}
export interface PhotometricNoiseCheckResult {
  check: 'nir-photometric-noise';
  verdict: 'pass' | 'fail';
  segments: { fromNm: number; toNm: number; rms: number; points: number }[];
  meanRms: number;
  maxRms: number;
  limit: number;
  engineVersion: string;
}
export type AnyCheckResult =
  CheckResult | BlankCheckResult | NoiseCheckResult | WavelengthCheckResult | PhotometricNoiseCheckResult;

/** A polystyrene result (the only kind without a "check" field). */
export const isPolystyreneResult = (r: AnyCheckResult | null | undefined): r is CheckResult => !!r && !('check' in r);

export interface Qualification {
  id: number;
  instrumentId: number;
  stage: (typeof QUALIFICATION_STAGES)[number];
  documentRef: string;
  executedFrom: string;
  executedTo: string;
  status: (typeof QUALIFICATION_STATUSES)[number];
  nextDue: string | null;
  summary: string;
  recordedBy: number;
  recordedByName: string | null;
  recordedAt: string;
  signature: SignatureRecord | null;
}

export interface MaintenanceEntry {
  id: number;
  instrumentId: number;
  kind: (typeof MAINTENANCE_KINDS)[number];
  performedOn: string;
  performedBy: string;
  description: string;
  recordedBy: number;
  recordedByName: string | null;
  recordedAt: string;
}

export interface ServiceEvent {
  id: number;
  instrumentId: number;
  state: 'in-service' | 'out-of-service';
  reason: string;
  recordedBy: number;
  recordedByName: string | null;
  recordedAt: string;
  signature: SignatureRecord | null;
}

export interface InstrumentDetail extends InstrumentListItem {
  specs: CheckSpecView[];
  checks: InstrumentCheckView[];
  qualifications: Qualification[];
  maintenance: MaintenanceEntry[];
  serviceEvents: ServiceEvent[];
}

/** One measurement a failed check casts doubt on. */
export interface ImpactMeasurement {
  measurementId: number;
  testId: number;
  lotId: number;
  lotNumber: string;
  containerId: number;
  containerLabel: string;
  measuredAt: string;
  verdict: string;
}

export interface ImpactNotice {
  id: number;
  assessmentId: number;
  lotId: number;
  lotNumber: string;
  certificateId: number | null;
  certificateNumber: string | null;
  notice: string;
  createdAt: string;
  /** The assessment's state: the notice stands; the decision says what followed. */
  assessmentStatus: 'open' | 'assessed';
  decision: 'none' | 'retest' | null;
}

export interface ImpactAssessment {
  id: number;
  instrumentCheckId: number;
  instrumentId: number;
  instrumentName: string;
  checkType: CheckType;
  windowFrom: string | null;
  windowTo: string;
  /** Which time of a measurement was compared with the window. */
  basis: 'acquisition-or-upload';
  openedAt: string;
  status: 'open' | 'assessed';
  decision: 'none' | 'retest' | null;
  retestContainerIds: number[];
  rationale: string | null;
  assessedBy: number | null;
  assessedByName: string | null;
  assessedAt: string | null;
  signature: SignatureRecord | null;
  measurements: ImpactMeasurement[];
  notices: ImpactNotice[];
}
