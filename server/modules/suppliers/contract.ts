/**
 * Contract of the supplier master (issue 14 item 1): suppliers and manufacturers, the approved
 * sources of a material and their qualification status. Pure data and zod only (the client
 * imports it).
 */
import { z } from 'zod';
import { calendarDate, multiLineText, signatureInput, singleLineText } from '../../lib/contract';
import type { PersonRef, SignatureRecord } from '../../lib/contract';

export const SUPPLIER_KINDS = ['supplier', 'manufacturer', 'both'] as const;
export type SupplierKind = (typeof SUPPLIER_KINDS)[number];
export const SUPPLIER_KIND_LABELS: Record<SupplierKind, string> = {
  supplier: 'Supplier (trades or ships)',
  manufacturer: 'Manufacturer',
  both: 'Supplier and manufacturer',
};

export const SOURCE_STATUSES = ['new', 'qualified', 'conditional', 'blocked'] as const;
export type SourceStatus = (typeof SOURCE_STATUSES)[number];
export const SOURCE_STATUS_LABELS: Record<SourceStatus, string> = {
  new: 'New: first delivery, every container tested',
  qualified: 'Qualified',
  conditional: 'Conditional: receipt under QA conditions',
  blocked: 'Blocked: no receipt',
};

/**
 * Sampling plans. Every container is the default and, per EU GMP Annex 8 para 2, the rule unless a
 * validated reduced procedure exists. The reduced plan samples ceil(1 + sqrt(N)) containers (the
 * "n plan" of WHO TRS 929 Annex 4, section 5.1, for uniform material from a recognised source) and
 * is allowed only for a qualified source with QA's recorded validation justification (Annex 8
 * para 3 names what that validation weighs).
 */
export const SAMPLING_PLANS = ['every-container', 'sqrt-n-plus-1'] as const;
export type SamplingPlan = (typeof SAMPLING_PLANS)[number];
export const SAMPLING_PLAN_LABELS: Record<SamplingPlan, string> = {
  'every-container': 'Every container (EU GMP Annex 8 para 2)',
  'sqrt-n-plus-1': 'Reduced: 1 + √N containers, rounded up (WHO TRS 929 Annex 4, 5.1), validated',
};

/** Containers a plan samples out of N: every one, or ceil(1 + sqrt(N)) but never more than N. */
export function plannedSampleCount(plan: SamplingPlan, containers: number): number {
  if (plan === 'every-container') return containers;
  return Math.min(containers, Math.ceil(1 + Math.sqrt(containers)));
}

/** Shortest justification of a reduced plan QA may record (a sentence, not a token). */
export const MIN_JUSTIFICATION = 20;

export const supplierCreateSchema = z.object({
  name: singleLineText().min(2, 'Name the supplier or manufacturer.').max(160),
  kind: z.enum(SUPPLIER_KINDS),
  address: singleLineText().max(400).optional(),
  note: multiLineText().max(4000).nullable().optional(),
  signature: signatureInput,
});
export type SupplierCreate = z.infer<typeof supplierCreateSchema>;

export const sourceCreateSchema = z.object({
  materialId: z.number().int().positive('Choose the material.'),
  supplierId: z.number().int().positive('Choose the supplier.'),
  manufacturerId: z.number().int().positive().nullable().optional(),
  reason: multiLineText().min(3, 'Say why this source is recorded.').max(2000),
  signature: signatureInput,
});
export type SourceCreate = z.infer<typeof sourceCreateSchema>;

export const sourceStatusSchema = z.object({
  status: z.enum(SOURCE_STATUSES),
  conditions: multiLineText().max(4000).nullable().optional(),
  samplingPlan: z.enum(SAMPLING_PLANS),
  samplingJustification: multiLineText().max(4000).nullable().optional(),
  effectiveFrom: calendarDate('effective date'),
  reviewBy: calendarDate('review date').nullable().optional(),
  reason: multiLineText().min(3, 'Give the reason for the change.').max(2000),
  signature: signatureInput,
});
export type SourceStatusInput = z.infer<typeof sourceStatusSchema>;

export const sourceListQuery = z.object({ materialId: z.coerce.number().int().positive().optional() });

export interface SupplierRecord {
  id: number;
  code: string;
  name: string;
  kind: SupplierKind;
  address: string;
  note: string | null;
  createdBy: PersonRef | null;
  createdAt: string;
}

export interface SourceStatusRecord {
  id: number;
  status: SourceStatus;
  conditions: string | null;
  samplingPlan: SamplingPlan;
  samplingJustification: string | null;
  effectiveFrom: string;
  reviewBy: string | null;
  reason: string;
  setBy: PersonRef | null;
  setAt: string;
  signature: SignatureRecord | null;
}

export interface SourceRecord {
  id: number;
  material: { id: number; code: string; name: string };
  supplier: { id: number; code: string; name: string };
  manufacturer: { id: number; code: string; name: string } | null;
  current: SourceStatusRecord;
  history: SourceStatusRecord[];
}
