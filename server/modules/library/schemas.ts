/**
 * Input schemas of the reference library (zod). Pure data and zod only: the client imports
 * this file too, so its forms validate with the same rules as the server.
 *
 * `identityMethodSchema` mirrors the engine's `IdentityMethod` (server/spectra/method.ts);
 * a compile-time check below keeps the two in step, and the service additionally runs the
 * engine's own `validateMethod`, which knows the cross-field rules (grid size, derivative
 * order versus polynomial, ...).
 */
import { z } from 'zod';
import type { IdentityMethod } from '../../spectra';

export const TECHNIQUES = ['mid-ir-atr', 'mid-ir-transmission', 'nir'] as const;
export const TECHNIQUE_LABELS: Record<(typeof TECHNIQUES)[number], string> = {
  'mid-ir-atr': 'Mid-IR, ATR',
  'mid-ir-transmission': 'Mid-IR, transmission',
  nir: 'Near-IR',
};

/**
 * Tolerance offered when QA switches the relative band intensity criterion on (a fraction of the
 * strongest band); the engine's DEFAULT_RELATIVE_INTENSITY_TOLERANCE, repeated here so the client
 * does not load the engine (tests/unit/spectra-intensity.test.ts keeps the two equal).
 */
export const SUGGESTED_RELATIVE_INTENSITY_TOLERANCE = 0.15;

const wn = z.number().finite().positive();
const range = z.object({ from: wn, to: wn }).refine((r) => r.from < r.to, { message: 'from must be below to (cm-1).' });
const fraction = z.number().finite().gt(0).lte(1);
const correlationLimit = z.number().finite().gt(-1).lte(1);

export const identityMethodSchema = z.object({
  technique: z.enum(TECHNIQUES),
  range,
  excludedRegions: z.array(z.object({ from: wn, to: wn, label: z.string().trim().min(1).max(80) })).max(20),
  gridStep: z.number().finite().positive().max(50),
  baseline: z.enum(['none', 'offset', 'linear', 'iterative']),
  normalisation: z.enum(['none', 'snv', 'vector']),
  smoothing: z.object({
    windowSize: z.number().int().min(5).max(201),
    polynomial: z.number().int().min(1).max(5),
    derivative: z.union([z.literal(0), z.literal(1), z.literal(2)]),
  }),
  thresholds: z.object({
    minCorrelation: correlationLimit,
    minDerivativeCorrelation: correlationLimit.nullable(),
    maxMahalanobis: z.number().finite().positive().nullable(),
    /** Confidence of the residual (Q) limit derived from the references; absent in methods stored before engine 2.0.0. */
    residualConfidence: z.number().finite().min(0.5).max(0.9999).nullable().optional(),
  }),
  bandTolerance: z.discriminatedUnion('mode', [
    z.object({ mode: z.literal('absolute'), cm1: z.number().finite().gt(0).lte(100) }),
    z.object({ mode: z.literal('relative'), percent: z.number().finite().gt(0).lte(5) }),
  ]),
  widthTolerance: fraction.nullable(),
  peakProminence: fraction.nullable(),
  maxExtraBandProminence: fraction.nullable(),
  /** Relative band intensity tolerance (fraction of the strongest band); absent in methods stored before engine 2.0.0. */
  relativeIntensityTolerance: fraction.nullable().optional(),
  quality: z.object({
    minMaxAbsorbance: z.number().finite().min(0),
    maxAbsorbance: z.number().finite().positive(),
    minSignalToNoise: z.number().finite().min(0),
  }),
  distanceModel: z
    .object({ components: z.number().int().min(1).max(20), minReferences: z.number().int().min(3) })
    .nullable(),
});
export type IdentityMethodInput = z.infer<typeof identityMethodSchema>;

// Compile-time: a validated input is an engine IdentityMethod and vice versa.
type Same<A, B> = [A] extends [B] ? ([B] extends [A] ? true : false) : false;
const _methodShapeMatches: Same<IdentityMethodInput, IdentityMethod> = true;
void _methodShapeMatches;

export const reasonSchema = z.string().trim().min(3, 'Give a reason (at least 3 characters).').max(2000);
/** A written justification that overrides a gate: at least 20 characters, so it says something. */
export const justificationSchema = z
  .string()
  .trim()
  .min(20, 'Write a justification of at least 20 characters.')
  .max(4000);

export const materialCreateSchema = z.object({
  code: z
    .string()
    .trim()
    .min(2)
    .max(40)
    .regex(/^[A-Z0-9][A-Z0-9._-]*$/, 'Use capital letters, digits, dot, dash or underscore.'),
  name: z.string().trim().min(2).max(160),
  grade: z.string().trim().max(120).default(''),
  monographRef: z.string().trim().max(200).default(''),
  techniques: z.array(z.enum(TECHNIQUES)).min(1, 'Choose at least one technique.'),
  notes: z.string().trim().max(4000).nullable().optional(),
  reason: z.string().trim().max(2000).optional(),
});
export type MaterialCreate = z.infer<typeof materialCreateSchema>;

export const materialUpdateSchema = z.object({
  name: z.string().trim().min(2).max(160).optional(),
  grade: z.string().trim().max(120).optional(),
  monographRef: z.string().trim().max(200).optional(),
  techniques: z.array(z.enum(TECHNIQUES)).min(1).optional(),
  notes: z.string().trim().max(4000).nullable().optional(),
  active: z.boolean().optional(),
  reason: reasonSchema,
});
export type MaterialUpdate = z.infer<typeof materialUpdateSchema>;

export const methodCreateSchema = z.object({
  /** Full parameters; when absent the new draft copies the latest version (or the engine default). */
  params: identityMethodSchema.optional(),
  changeNote: z.string().trim().max(2000).optional(),
});

export const methodUpdateSchema = z.object({
  params: identityMethodSchema.optional(),
  changeNote: z.string().trim().max(2000).optional(),
  reason: reasonSchema,
});

export const bandEditSchema = z.object({
  position: z.number().finite().positive().max(15000),
  /** QA's own assignment text; when empty the correlation table's assignment is used. */
  assignment: z.string().trim().max(300).optional(),
});
export const bandsUpdateSchema = z.object({
  bands: z.array(bandEditSchema).max(200),
  reason: reasonSchema,
});

export const referenceUploadFieldsSchema = z.object({
  supplier: z.string().trim().max(160).default(''),
  supplierLot: z.string().trim().max(80).default(''),
  measuredHow: z.string().trim().max(2000).default(''),
  instrumentId: z.preprocess(
    (v) => (v === '' || v === undefined || v === null ? undefined : v),
    z.coerce.number().int().positive().optional(),
  ),
});
