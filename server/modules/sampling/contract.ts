/**
 * Contract of sampling (issue 14 item 3) and container status (item 4). Pure data and zod only.
 */
import { z } from 'zod';
import { instantInRange, multiLineText, signatureInput, singleLineText } from '../../lib/contract';
import type { PersonRef, SignatureRecord } from '../../lib/contract';

export const lineClearanceSchema = z.object({
  area: singleLineText().min(2, 'Name the sampling booth or area.').max(120),
  previousUse: multiLineText().max(1000).nullable().optional(),
  note: multiLineText().max(2000).nullable().optional(),
  signature: signatureInput,
});
export type LineClearanceInput = z.infer<typeof lineClearanceSchema>;

export const RESERVE_UNITS = ['g', 'kg', 'mL', 'L', 'units'] as const;

export const sampledContainerSchema = z.object({
  containerId: z.number().int().positive(),
  opened: z.boolean(),
  sampled: z.boolean(),
  resealed: z.boolean(),
  note: singleLineText().max(400).nullable().optional(),
});

export const samplingSchema = z.object({
  lineClearanceId: z.number().int().positive('Record the line clearance of the booth first.'),
  sampledAt: instantInRange('Give the sampling time as an ISO 8601 instant.'),
  tool: singleLineText().min(2, 'Name the sampling tool (e.g. stainless steel thief, cleaned, ID ST-04).').max(200),
  containers: z.array(sampledContainerSchema).min(1, 'Name at least one sampled container.').max(999),
  reserve: z.object({
    quantity: z.number().positive('The reserve sample quantity is more than 0.').max(1_000_000),
    unit: z.enum(RESERVE_UNITS),
    location: singleLineText().min(2, 'Say where the reserve sample is kept.').max(200),
  }),
  note: multiLineText().max(4000).nullable().optional(),
  signature: signatureInput,
});
export type SamplingInput = z.infer<typeof samplingSchema>;

export const CONTAINER_STATUSES = ['quarantine', 'sampled', 'released', 'rejected', 'blocked'] as const;
export type ContainerStatus = (typeof CONTAINER_STATUSES)[number];
/** The status word as printed large on the label and shown on the lot page. */
export const CONTAINER_STATUS_WORDS: Record<ContainerStatus, string> = {
  quarantine: 'QUARANTINE',
  sampled: 'SAMPLED',
  released: 'RELEASED',
  rejected: 'REJECTED',
  blocked: 'BLOCKED',
};

export interface LineClearanceRecord {
  id: number;
  area: string;
  previousUse: string | null;
  note: string | null;
  clearedBy: PersonRef;
  clearedAt: string;
  signature: SignatureRecord | null;
}

export interface SamplingRecordView {
  id: number;
  lineClearance: LineClearanceRecord;
  area: string;
  sampledAt: string;
  tool: string;
  reserve: { quantity: number; unit: string; location: string };
  note: string | null;
  samplingPlan: 'every-container' | 'sqrt-n-plus-1';
  sampler: PersonRef;
  containers: {
    containerId: number;
    label: string;
    opened: boolean;
    sampled: boolean;
    resealed: boolean;
    note: string | null;
  }[];
  signature: SignatureRecord | null;
}

export interface ContainerStatusRecord {
  id: number;
  containerId: number;
  label: string;
  status: ContainerStatus;
  reason: string | null;
  changedBy: PersonRef | null;
  changedAt: string;
}

export interface LotSamplingView {
  lotId: number;
  samplingPlan: 'every-container' | 'sqrt-n-plus-1' | null;
  sampleCount: number | null;
  clearances: LineClearanceRecord[];
  record: SamplingRecordView | null;
  /** Each container's status history, oldest first, and its current status. */
  containers: {
    containerId: number;
    seq: number;
    label: string;
    status: ContainerStatus;
    /** What blocks it now (an open investigation, too many invalid measurements); empty when not held. */
    heldBy: string[];
    history: ContainerStatusRecord[];
  }[];
}
