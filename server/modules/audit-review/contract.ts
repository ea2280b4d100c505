/**
 * Contract of the periodic audit-trail review (EU GMP Annex 11 §9: audit trails regularly
 * reviewed; docs/trending.md): QA reviews the GMP-relevant events of a period with exception
 * lists and records a signed review with findings and actions. Pure data and zod: the client
 * imports this file too.
 */
import { z } from 'zod';
import { calendarDate, multiLineText, signatureInput, type SignatureRecord } from '../../lib/contract';

export const REVIEW_CATEGORIES = [
  'failed-sign-ins',
  'failed-signatures',
  'role-changes',
  'invalidated-results',
  'gate-overrides',
  'integrity-alerts',
  'trend-signals',
] as const;
export type ReviewCategory = (typeof REVIEW_CATEGORIES)[number];

export const REVIEW_CATEGORY_LABELS: Record<ReviewCategory, string> = {
  'failed-sign-ins': 'Failed sign-ins and account lock-outs',
  'failed-signatures': 'Refused e-signatures',
  'role-changes': 'Role changes and account changes',
  'invalidated-results': 'Invalidated results',
  'gate-overrides': 'Specificity gate overrides (approvals with a justification) and blocked approvals',
  'integrity-alerts': 'Integrity alerts raised and signed off',
  'trend-signals': 'Trend signals raised and acknowledged',
};

export const periodQuery = z
  .object({
    from: calendarDate('first day of the period'),
    to: calendarDate('last day of the period'),
  })
  .refine((p) => p.from <= p.to, { message: 'The period must end on or after its first day.', path: ['to'] });

export const reviewSchema = z
  .object({
    from: calendarDate('first day of the period'),
    to: calendarDate('last day of the period'),
    scope: z
      .array(z.enum(REVIEW_CATEGORIES))
      .min(1, 'Choose at least one exception list that was reviewed.')
      .max(REVIEW_CATEGORIES.length),
    findings: multiLineText()
      .min(10, 'Write the findings (at least 10 characters; "none" is a finding too).')
      .max(8000),
    actions: multiLineText().min(4, 'Write the actions, or "none".').max(8000),
    signature: signatureInput,
  })
  .refine((p) => p.from <= p.to, { message: 'The period must end on or after its first day.', path: ['to'] });
export type ReviewInput = z.infer<typeof reviewSchema>;

export interface ExceptionEvent {
  id: number;
  occurredAt: string;
  actorName: string;
  action: string;
  entity: string;
  reason: string | null;
}

export interface ExceptionList {
  key: ReviewCategory;
  label: string;
  count: number;
  /** the events, newest first, at most EVENT_CAP */
  events: ExceptionEvent[];
}

export interface ExceptionLists {
  from: string;
  to: string;
  /** GMP-relevant events of the period in total (every action but sign-in, sign-out and exports) */
  totalEvents: number;
  lists: ExceptionList[];
}

export interface AuditReview {
  id: number;
  number: string;
  from: string;
  to: string;
  scope: ReviewCategory[];
  exceptions: {
    totalEvents: number;
    lists: { key: ReviewCategory; label: string; count: number; eventIds: number[] }[];
  };
  findings: string;
  actions: string;
  reviewedBy: { id: number; name: string };
  reviewedAt: string;
  signatures: SignatureRecord[];
}

export interface ReviewDue {
  due: boolean;
  intervalMonths: number;
  lastReview: { id: number; number: string; to: string } | null;
  /** first day on which the next review is due (YYYY-MM-DD) */
  dueFrom: string | null;
  text: string;
}
