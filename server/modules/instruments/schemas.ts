/** Input schemas of the instrument registry (zod; the client imports this file too). */
import { z } from 'zod';

export const INSTRUMENT_TECHNIQUES = ['mid-ir', 'nir'] as const;
export const SAMPLINGS = ['atr', 'transmission', 'diffuse-reflectance'] as const;
export const SAMPLING_LABELS: Record<(typeof SAMPLINGS)[number], string> = {
  atr: 'ATR',
  transmission: 'Transmission',
  'diffuse-reflectance': 'Diffuse reflectance',
};

export const instrumentCreateSchema = z.object({
  name: z.string().trim().min(2).max(120),
  serialNumber: z.string().trim().min(1).max(80),
  technique: z.enum(INSTRUMENT_TECHNIQUES),
  sampling: z.enum(SAMPLINGS),
  location: z.string().trim().max(160).default(''),
  checkValidityHours: z
    .number()
    .int()
    .min(1)
    .max(24 * 31)
    .default(24),
  reason: z.string().trim().max(2000).optional(),
});
export type InstrumentCreate = z.infer<typeof instrumentCreateSchema>;

export const instrumentUpdateSchema = z.object({
  name: z.string().trim().min(2).max(120).optional(),
  serialNumber: z.string().trim().min(1).max(80).optional(),
  sampling: z.enum(SAMPLINGS).optional(),
  location: z.string().trim().max(160).optional(),
  checkValidityHours: z
    .number()
    .int()
    .min(1)
    .max(24 * 31)
    .optional(),
  active: z.boolean().optional(),
  reason: z.string().trim().min(3, 'Give a reason (at least 3 characters).').max(2000),
});
export type InstrumentUpdate = z.infer<typeof instrumentUpdateSchema>;

export const checkBandSchema = z.object({
  nominal: z.number().finite().positive().max(15000),
  tolerance: z.number().finite().gt(0).max(20),
});

export const SPEC_KINDS = ['pharmacopoeia-ft', 'pharmacopoeia-monochromator', 'site'] as const;

export const specCreateSchema = z
  .object({
    kind: z.enum(SPEC_KINDS),
    /** Required for kind "site"; ignored for the pharmacopoeial kinds (their table is used). */
    bands: z.array(checkBandSchema).min(3).max(20).optional(),
    justification: z.string().trim().min(20, 'Write a justification of at least 20 characters.').max(4000),
  })
  .refine((s) => s.kind !== 'site' || (s.bands && s.bands.length >= 3), {
    message: 'A site specification needs at least three bands.',
    path: ['bands'],
  });
