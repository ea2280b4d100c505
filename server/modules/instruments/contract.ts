/**
 * Contract of the instrument registry: request schemas (zod), labels and response shapes. Pure
 * data and zod only: the client imports this file too.
 */
import { z } from 'zod';
import { multiLineText, signatureInput, type SignatureRecord, singleLineText } from '../../lib/contract';

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

export const specCreateSchema = z
  .object({
    kind: z.enum(SPEC_KINDS),
    /** Required for kind "site"; ignored for the pharmacopoeial kinds (their table is used). */
    bands: z.array(checkBandSchema).min(3).max(20).optional(),
    justification: multiLineText().min(20, 'Write a justification of at least 20 characters.').max(4000),
  })
  .refine((s) => s.kind !== 'site' || (s.bands && s.bands.length >= 3), {
    message: 'A site specification needs at least three bands.',
    path: ['bands'],
  });
export type SpecCreate = z.infer<typeof specCreateSchema>;

export const specApprovalSchema = z.object({ spec: specCreateSchema, signature: signatureInput });
export type SpecApproval = z.infer<typeof specApprovalSchema>;

/** Multipart fields of a check upload besides the file: the performer's signature. */
export const checkUploadFieldsSchema = signatureInput;

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
}

export type InstrumentListItem = Instrument & InstrumentCheckState;

export interface CheckSpec {
  id: number;
  instrumentId: number;
  version: number;
  kind: string;
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
  specId: number;
  fileId: number;
  result: CheckResult;
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

export interface InstrumentDetail extends InstrumentListItem {
  specs: CheckSpecView[];
  checks: InstrumentCheckView[];
}
