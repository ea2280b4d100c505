/**
 * Contract of investigations of failing identity results (after FDA guidance "Investigating
 * Out-of-Specification (OOS) Test Results for Pharmaceutical Production", phase I laboratory
 * investigation): request schemas, labels and response shapes. Pure data and zod: the client
 * imports this file too.
 */
import { z } from 'zod';
import { multiLineText, signatureInput, type SignatureRecord } from '../../lib/contract';
import type { HintEntry } from '../testing/contract';

export const PHASE1_ITEMS = ['instrument', 'sampleHandling', 'method', 'data'] as const;
export type Phase1Item = (typeof PHASE1_ITEMS)[number];

export const PHASE1_LABELS: Record<Phase1Item, { title: string; question: string }> = {
  instrument: {
    title: 'Instrument',
    question: 'Was the instrument check valid, the ATR crystal clean and the instrument working as intended?',
  },
  sampleHandling: {
    title: 'Sample handling',
    question:
      'Was the right container sampled, labelled and presented to the instrument correctly, without contamination?',
  },
  method: {
    title: 'Method',
    question: 'Were the approved identity method and reference set used and the procedure followed?',
  },
  data: {
    title: 'Data',
    question: 'Is the right file attached to the right container, and were the data processed without error?',
  },
};

const checkItem = z.object({
  /** true: no laboratory error found on this point; false: an error was found. */
  ok: z.boolean(),
  note: multiLineText().min(3, 'Write what was checked (at least 3 characters).').max(2000),
});

export const phase1Schema = z.object({
  instrument: checkItem,
  sampleHandling: checkItem,
  method: checkItem,
  data: checkItem,
  summary: multiLineText().min(10, 'Summarise the laboratory check (at least 10 characters).').max(4000),
  signature: signatureInput,
});
export type Phase1Input = z.infer<typeof phase1Schema>;

const justification = multiLineText().min(20, 'Write a justification of at least 20 characters.').max(4000);

export const invalidateSchema = z.object({
  /** The phase I point where the assignable laboratory error was found. */
  cause: z.enum(PHASE1_ITEMS),
  justification,
  retestContainerIds: z
    .array(z.number().int().positive())
    .min(1, 'Name at least one container to re-sample and retest.')
    .max(999),
  signature: signatureInput,
});
export type InvalidateInput = z.infer<typeof invalidateSchema>;

export const confirmSchema = z.object({
  justification,
  signature: signatureInput,
});
export type ConfirmInput = z.infer<typeof confirmSchema>;

/** Opening an investigation from a trend signal (docs/trending.md): why, and the e-signature. */
export const openFromSignalSchema = z.object({
  reason: multiLineText().min(10, 'Say why the signal needs an investigation (at least 10 characters).').max(4000),
  signature: signatureInput,
});
export type OpenFromSignalInput = z.infer<typeof openFromSignalSchema>;

/** Closing an investigation of a trend signal after its phase I check: the signed conclusion. */
export const concludeSchema = z.object({
  conclusion: multiLineText().min(20, 'Write a conclusion of at least 20 characters.').max(4000),
  signature: signatureInput,
});
export type ConcludeInput = z.infer<typeof concludeSchema>;

export const INVESTIGATION_KINDS = ['failure', 'trend'] as const;
export type InvestigationKind = (typeof INVESTIGATION_KINDS)[number];

export const INVESTIGATION_STATUSES = ['open', 'phase1-recorded', 'retest-authorised', 'closed'] as const;
export type InvestigationStatus = (typeof INVESTIGATION_STATUSES)[number];
export const INVESTIGATION_DECISIONS = ['invalidated', 'confirmed', 'concluded'] as const;
export type InvestigationDecision = (typeof INVESTIGATION_DECISIONS)[number];

export const investigationListQuery = z.object({
  state: z.enum(['open', 'all']).default('open'),
  lotId: z.coerce.number().int().positive().optional(),
});

// ------------------------------------------------------------------ response shapes

export interface FailingContainer {
  containerId: number;
  label: string;
  measurementId: number;
  score: number | null;
  explanation: string[];
  hint: HintEntry[];
  /** "Closest approved materials: ..." as shown to QA. */
  hintText: string;
}

export interface Phase1Record {
  items: Record<Phase1Item, { ok: boolean; note: string }>;
  summary: string;
  recordedBy: { id: number; name: string };
  recordedAt: string;
  signatureId: number;
}

/** A measurement of the pattern of a trend signal, as named when the investigation opened. */
export interface TrendSubjectMeasurement {
  measurementId: number;
  at: string;
  value: number | null;
  lotNumber: string;
  container: string;
  source: string;
  instrument: string;
  operator: string;
}

/** What an investigation of a trend signal is about, fixed when it opens. */
export interface TrendSubject {
  signal: {
    id: number;
    materialId: number;
    materialName: string;
    methodId: number;
    methodVersion: number;
    metric: string;
    metricTitle: string;
    scopeLabel: string;
    rule: string;
    ruleText: string;
    ruleSource: string;
    value: number;
    detail: string;
    raisedAt: string;
  };
  measurements: TrendSubjectMeasurement[];
  reason: string;
}

export interface InvestigationSummary {
  id: number;
  number: string;
  /** failure: a verified test with failing containers; trend: a trend signal (no lot, no test) */
  kind: InvestigationKind;
  lotId: number | null;
  lotNumber: string | null;
  materialName: string;
  testId: number | null;
  attempt: number | null;
  /** the signal and its measurements, for kind trend */
  trend: TrendSubject | null;
  status: InvestigationStatus;
  decision: InvestigationDecision | null;
  failing: FailingContainer[];
  phase1: Phase1Record | null;
  justification: string | null;
  retestContainerIds: number[];
  openedAt: string;
  decidedBy: { id: number; name: string } | null;
  closedAt: string | null;
  updatedAt: string;
}

export interface InvestigationDetail extends InvestigationSummary {
  signatures: SignatureRecord[];
  /** Who performed the test under investigation (QA may not decide their own work). */
  performedBy: number | null;
}
