/**
 * Contract of the ERP/LIMS link (issue 14 item 6): machine accounts and their scopes, the ERP's
 * goods receipt, webhook endpoints and deliveries. Pure data and zod only (the client imports it).
 */
import { z } from 'zod';
import { calendarDate, multiLineText, singleLineText } from '../../lib/contract';
import type { PersonRef } from '../../lib/contract';

/** What a machine token may do. */
export const MACHINE_SCOPES = ['lots:receive', 'lots:read'] as const;
export type MachineScope = (typeof MACHINE_SCOPES)[number];
export const MACHINE_SCOPE_LABELS: Record<MachineScope, string> = {
  'lots:receive': 'Create lots at goods receipt',
  'lots:read': 'Read lot status, identity results and disposition',
};

/** Events sent to webhook endpoints. */
export const WEBHOOK_EVENTS = [
  'lot.received',
  'lot.identity-passed',
  'lot.identity-failed',
  'lot.released',
  'lot.rejected',
  'lot.retest-started',
] as const;
export type WebhookEvent = (typeof WEBHOOK_EVENTS)[number];

export const machineAccountCreateSchema = z.object({
  name: singleLineText().min(3, 'Name the machine account (e.g. ERP production).').max(120),
  scopes: z.array(z.enum(MACHINE_SCOPES)).min(1, 'Give the account at least one scope.'),
  reason: multiLineText().min(3, 'Say why the account is made.').max(2000),
});
export const machineAccountRevokeSchema = z.object({
  reason: multiLineText().min(3, 'Say why the token is revoked.').max(2000),
});

export const webhookCreateSchema = z.object({
  name: singleLineText().min(3).max(120),
  url: z
    .string()
    .url('Give the full URL of the receiver.')
    .max(500)
    .refine((u) => {
      try {
        const p = new URL(u);
        if (p.protocol === 'https:') return true;
        return p.protocol === 'http:' && ['127.0.0.1', 'localhost', '[::1]'].includes(p.hostname);
      } catch {
        return false;
      }
    }, 'A receiver is reached over https; plain http only on this machine (127.0.0.1), for the local test receiver.'),
  events: z.array(z.enum(WEBHOOK_EVENTS)).min(1, 'Choose at least one event.'),
});

/** The ERP's goods receipt: creates the lot, idempotent by the ERP's own receipt number. */
export const erpReceiptSchema = z.object({
  receiptNumber: singleLineText().min(1, "Give the ERP's goods-receipt number.").max(80),
  materialCode: singleLineText().min(1).max(40),
  supplierCode: singleLineText().min(1).max(40),
  manufacturerCode: singleLineText().max(40).nullable().optional(),
  supplierLot: singleLineText().min(1).max(80),
  containerCount: z.number().int().min(1).max(999),
  receivedDate: calendarDate('received date'),
  notes: multiLineText().max(4000).nullable().optional(),
});
export type ErpReceipt = z.infer<typeof erpReceiptSchema>;

export const erpLotParams = z.object({
  lotNumber: z.string().regex(/^L-\d{4}-\d{5}$/, 'A lot number is L-YYYY-NNNNN.'),
});

export interface MachineAccountRecord {
  id: number;
  name: string;
  scopes: MachineScope[];
  tokenHint: string;
  createdBy: PersonRef;
  createdAt: string;
  lastUsedAt: string | null;
  revokedAt: string | null;
  revokeReason: string | null;
}

/** Returned once, when the account is made: the token is never shown again. */
export interface MachineAccountCreated extends MachineAccountRecord {
  token: string;
}

export interface WebhookEndpointRecord {
  id: number;
  name: string;
  url: string;
  events: WebhookEvent[];
  createdBy: PersonRef;
  createdAt: string;
  deactivatedAt: string | null;
  deliveries: { pending: number; delivered: number; failed: number };
}

export interface WebhookEndpointCreated extends WebhookEndpointRecord {
  /** The signing secret (Standard Webhooks, HMAC-SHA256), shown once. */
  secret: string;
}

export interface WebhookDeliveryRecord {
  id: number;
  endpointId: number;
  endpointName: string;
  messageId: string;
  eventType: string;
  status: 'pending' | 'delivered' | 'failed';
  attempts: number;
  nextAttemptAt: string | null;
  lastStatusCode: number | null;
  lastError: string | null;
  createdAt: string;
  deliveredAt: string | null;
}

/** What the ERP reads about a lot. */
export interface ErpLotView {
  lotNumber: string;
  erpReceiptNumber: string | null;
  material: { code: string; name: string };
  supplierLot: string;
  containerCount: number;
  status: 'quarantine' | 'released' | 'rejected';
  identityStatus: string;
  certificate: string | null;
  retestDate: string | null;
  sampling: { plan: string | null; sampledContainers: number | null };
  containers: { label: string; status: string; identity: 'pass' | 'fail' | null }[];
  replayed?: boolean;
}
