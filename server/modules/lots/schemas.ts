/**
 * Input schemas of lot receipt (zod). Pure data and zod only: the client imports this file
 * too, so the receipt form validates with the same rules as the server.
 */
import { z } from 'zod';

/** Most containers one lot may have (labels carry a 3-digit sequence). */
export const MAX_CONTAINERS = 999;

const isoDate = z
  .string()
  .regex(/^\d{4}-\d{2}-\d{2}$/, 'Give the date as YYYY-MM-DD.')
  .refine(
    (s) => !Number.isNaN(Date.parse(`${s}T00:00:00Z`)) && new Date(`${s}T00:00:00Z`).toISOString().slice(0, 10) === s,
    'This is not a calendar date.',
  );

export const lotCreateSchema = z.object({
  materialId: z.number().int().positive('Choose the material grade.'),
  supplier: z.string().trim().min(2, 'Name the supplier.').max(160),
  supplierLot: z.string().trim().min(1, "Give the supplier's lot number.").max(80),
  containerCount: z
    .number()
    .int('The number of containers is a whole number.')
    .min(1, 'A lot has at least 1 container.')
    .max(MAX_CONTAINERS, `A lot has at most ${MAX_CONTAINERS} containers.`),
  receivedDate: isoDate,
  notes: z.string().trim().max(4000).nullable().optional(),
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
  search: z.string().trim().max(80).optional(),
});

/**
 * The signature part of a request body, as server/lib/esign.ts `signatureInput` (kept here too so
 * that schema files stay free of server-only imports and the client can import them).
 */
export const signatureFields = z.object({
  password: z.string().min(1, 'Enter your password to sign.').max(200),
  username: z.string().max(64).optional(),
});
