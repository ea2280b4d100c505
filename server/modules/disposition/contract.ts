/**
 * Contract of the material master for disposition, the release checks of a lot and QA's
 * disposition (issue 14 items 2 and 5). Pure data and zod only (the client imports it).
 */
import { z } from 'zod';
import { multiLineText, signatureInput, singleLineText } from '../../lib/contract';
import type { PersonRef, SignatureRecord } from '../../lib/contract';

export const RISK_CLASSES = ['low', 'medium', 'high'] as const;
export type RiskClass = (typeof RISK_CLASSES)[number];
export const RISK_CLASS_LABELS: Record<RiskClass, string> = {
  low: 'Low risk',
  medium: 'Medium risk',
  high: 'High risk',
};

/** Kinds of release check besides IR identity. */
export const CHECK_KINDS = ['coa-review', 'appearance', 'external-test', 'alternative-identity'] as const;
export type CheckKind = (typeof CHECK_KINDS)[number];
export const CHECK_KIND_LABELS: Record<CheckKind, string> = {
  'coa-review': "Supplier's certificate of analysis reviewed against the specification",
  appearance: 'Appearance',
  'external-test': 'Test done elsewhere (recorded with its reference)',
  'alternative-identity': 'Identity test replacing IR (material flagged "IR not suitable")',
};

export const checkDefSchema = z.object({
  key: z
    .string()
    .regex(/^[a-z][a-z0-9-]{1,39}$/, 'A check key is 2-40 lower-case letters, digits or hyphens, e.g. coa-review.'),
  kind: z.enum(CHECK_KINDS),
  label: singleLineText().min(3, 'Name the check.').max(200),
});
export type CheckDef = z.infer<typeof checkDefSchema>;

export const profileSchema = z
  .object({
    retestMonths: z.number().int().min(1, 'The retest interval is at least 1 month.').max(120),
    shelfLifeMonths: z.number().int().min(1).max(240),
    riskClass: z.enum(RISK_CLASSES),
    checks: z.array(checkDefSchema).max(20),
    reason: multiLineText().min(3, 'Give the reason for the change.').max(2000),
    signature: signatureInput,
  })
  .refine((p) => p.retestMonths <= p.shelfLifeMonths, {
    message: 'The retest interval cannot be longer than the shelf life.',
    path: ['retestMonths'],
  })
  .refine((p) => new Set(p.checks.map((c) => c.key)).size === p.checks.length, {
    message: 'Each check needs its own key.',
    path: ['checks'],
  });
export type ProfileInput = z.infer<typeof profileSchema>;

export interface MaterialProfile {
  id: number;
  materialId: number;
  version: number;
  retestMonths: number;
  shelfLifeMonths: number;
  riskClass: RiskClass;
  checks: CheckDef[];
  reason: string;
  createdBy: PersonRef;
  createdAt: string;
  signature: SignatureRecord | null;
}

export interface MaterialProfileView {
  material: { id: number; code: string; name: string; irNotSuitable: boolean };
  current: MaterialProfile | null;
  history: MaterialProfile[];
}

// ---------------------------------------------------------------- release checks of a lot

export const CHECK_OUTCOMES = ['conforms', 'does-not-conform'] as const;
export type CheckOutcome = (typeof CHECK_OUTCOMES)[number];

export const lotCheckSchema = z.object({
  checkKey: z.string().min(1).max(40),
  outcome: z.enum(CHECK_OUTCOMES),
  /** The document or report it refers to (CoA number, external lab report); required for tests done elsewhere. */
  reference: singleLineText().max(200).nullable().optional(),
  note: multiLineText().max(4000).nullable().optional(),
  signature: signatureInput,
});
export type LotCheckInput = z.infer<typeof lotCheckSchema>;

export interface LotCheckRecord {
  id: number;
  checkKey: string;
  outcome: CheckOutcome;
  reference: string | null;
  note: string | null;
  recordedBy: PersonRef;
  recordedAt: string;
  signature: SignatureRecord | null;
}

// ---------------------------------------------------------------- disposition

export const DECISIONS = ['released', 'rejected'] as const;
export type Decision = (typeof DECISIONS)[number];

export const releaseSchema = z.object({
  comment: multiLineText().max(2000).nullable().optional(),
  signature: signatureInput,
});
export type ReleaseInput = z.infer<typeof releaseSchema>;

export const rejectSchema = z.object({
  reason: multiLineText().min(10, 'Give the reason for the rejection (at least 10 characters).').max(4000),
  signature: signatureInput,
});
export type RejectInput = z.infer<typeof rejectSchema>;

/** One condition of release, with whether it holds and why not. */
export interface ReleaseCondition {
  key: 'identity' | 'investigations' | 'containers' | 'checks' | 'source' | 'sampling' | 'profile';
  label: string;
  met: boolean;
  detail: string;
}

export const retestSchema = z.object({
  reason: multiLineText().min(10, 'Give the reason for the retest (at least 10 characters).').max(2000),
  signature: signatureInput,
});
export type RetestInput = z.infer<typeof retestSchema>;

/** A retest of a released lot started by QA (the release it reopened stays on record). */
export interface RetestRecord {
  id: number;
  reopenedDispositionId: number;
  retestDateDue: string | null;
  reason: string;
  startedBy: PersonRef;
  startedAt: string;
  signature: SignatureRecord | null;
}

export interface DispositionRecord {
  id: number;
  decision: Decision;
  reason: string | null;
  retestDate: string | null;
  certificateNumber: string | null;
  decidedBy: PersonRef;
  decidedAt: string;
  signature: SignatureRecord | null;
}

export interface LotDispositionView {
  lotId: number;
  lotNumber: string;
  status: 'quarantine' | 'released' | 'rejected';
  conditions: ReleaseCondition[];
  releasable: boolean;
  requiredChecks: (CheckDef & { record: LotCheckRecord | null })[];
  checks: LotCheckRecord[];
  disposition: DispositionRecord | null;
  /** Retests of the lot, oldest first; a lot under retest is back in quarantine until QA decides again. */
  retests: RetestRecord[];
  /** Shown beside the decision: the result supports, and does not replace, the lab's procedure. */
  caution: string;
}

export const DISPOSITION_CAUTION =
  "Drumline's checks support, and do not replace, the site's validated release procedure and the responsible person's judgement under local GMP rules.";
