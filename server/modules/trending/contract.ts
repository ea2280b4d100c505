/**
 * Contract of trending (docs/trending.md): control charts of passed identity results per
 * material and identity-method version, their early-warning signals, QA's baseline period and
 * acknowledgement, and the exceptions a verifier's review leads with. Pure data and zod: the
 * client imports this file too.
 */
import { z } from 'zod';
import { calendarDate, multiLineText, singleLineText } from '../../lib/contract';

export const METRICS = ['correlation', 'derivative-correlation', 'band-shift'] as const;
export type Metric = (typeof METRICS)[number];

export const METRIC_LABELS: Record<Metric, { title: string; unit: string; digits: number }> = {
  correlation: { title: 'Correlation coefficient (r)', unit: '', digits: 4 },
  'derivative-correlation': { title: 'First-derivative correlation coefficient (r)', unit: '', digits: 4 },
  'band-shift': { title: 'Largest band shift', unit: 'cm⁻¹', digits: 2 },
};

export const SCOPE_KINDS = ['all', 'source', 'instrument', 'operator'] as const;
export type ScopeKind = (typeof SCOPE_KINDS)[number];
export const SCOPE_LABELS: Record<ScopeKind, string> = {
  all: 'All sources, instruments and operators',
  source: 'Source (supplier)',
  instrument: 'Instrument',
  operator: 'Operator',
};

/** The caution every chart and signal carries (docs/trending.md). */
export const TREND_CAUTION =
  'A trend signal is an early warning, not a failure: it supports, and does not replace, the lab’s validated procedure and the responsible person’s judgement under local GMP rules.';

export const chartQuery = z
  .object({
    methodId: z.coerce.number().int().positive(),
    metric: z.enum(METRICS).default('correlation'),
    scope: z.enum(SCOPE_KINDS).default('all'),
    value: singleLineText().max(160).default(''),
  })
  .refine((q) => q.scope === 'all' || q.value.length > 0, {
    message: 'Name the source, instrument or operator to filter by.',
    path: ['value'],
  });
export type ChartQuery = z.infer<typeof chartQuery>;

export const signalListQuery = z.object({
  status: z.enum(['open', 'all']).default('open'),
  materialId: z.coerce.number().int().positive().optional(),
});

export const acknowledgeSchema = z.object({
  comment: multiLineText().min(10, 'Say what you found and what follows (at least 10 characters).').max(4000),
});
export type AcknowledgeInput = z.infer<typeof acknowledgeSchema>;

export const baselineSchema = z
  .object({
    methodId: z.number().int().positive(),
    from: calendarDate('The first day of the baseline'),
    to: calendarDate('The last day of the baseline'),
    reason: multiLineText().min(10, 'Say why this period is a fair baseline (at least 10 characters).').max(2000),
  })
  .refine((b) => b.from <= b.to, { message: 'The baseline must end on or after its first day.', path: ['to'] });
export type BaselineInput = z.infer<typeof baselineSchema>;

// ------------------------------------------------------------------ response shapes

export interface ChartPoint {
  measurementId: number;
  at: string;
  value: number;
  /** moving range to the previous point (null for the first) */
  mr: number | null;
  lotNumber: string;
  container: string;
  source: string;
  instrument: string;
  operator: string;
}

export interface ChartLimits {
  centre: number;
  sigma: number;
  mrBar: number;
  ucl: number;
  lcl: number;
  mrUcl: number;
  points: number;
  /** where the limits come from, in words */
  basis: string;
}

export interface RuleHitView {
  rule: string;
  text: string;
  source: string;
  measurementId: number;
  pointIds: number[];
}

export interface TrendSignal {
  id: number;
  materialId: number;
  materialName: string;
  methodId: number;
  methodVersion: number;
  metric: Metric;
  scopeKind: ScopeKind;
  scopeValue: string;
  scopeLabel: string;
  rule: string;
  ruleText: string;
  ruleSource: string;
  measurementId: number;
  pointIds: number[];
  value: number;
  detail: string;
  /** open; acknowledged with a comment; or investigated (an investigation was opened from it) */
  status: 'open' | 'acknowledged' | 'investigated';
  raisedAt: string;
  investigationId: number | null;
  investigationNumber: string | null;
  acknowledgedBy: { id: number; name: string } | null;
  acknowledgedAt: string | null;
  ackComment: string | null;
}

export interface TrendBaseline {
  id: number;
  methodId: number;
  from: string;
  to: string;
  reason: string;
  fixedBy: { id: number; name: string };
  fixedAt: string;
}

export interface ChartResponse {
  materialId: number;
  materialName: string;
  methodId: number;
  methodVersion: number;
  metric: Metric;
  scope: ScopeKind;
  value: string;
  scopeLabel: string;
  points: ChartPoint[];
  limits: ChartLimits | null;
  baseline: TrendBaseline | null;
  hits: RuleHitView[];
  /** signals raised on this very series */
  signals: TrendSignal[];
  /** fewer than 20 points: no limits from the series and no signal yet */
  minPoints: number;
  caution: string;
}

export interface SeriesOption {
  value: string;
  label: string;
  points: number;
}

export interface TrendMethodOption {
  materialId: number;
  materialName: string;
  methodId: number;
  methodVersion: number;
  points: number;
  openSignals: number;
  sources: SeriesOption[];
  instruments: SeriesOption[];
  operators: SeriesOption[];
}

export interface ScanReport {
  series: number;
  raised: number;
}

export const EXCEPTION_KINDS = [
  'near-limit',
  'unusual-shift',
  'repeated',
  'invalid',
  'time-anomaly',
  'open-signal',
] as const;
export type ExceptionKind = (typeof EXCEPTION_KINDS)[number];

export const EXCEPTION_LABELS: Record<ExceptionKind, string> = {
  'near-limit': 'Score close to its limit',
  'unusual-shift': 'Band shift beyond what this material usually shows',
  repeated: 'Container measured more than once',
  invalid: 'Invalid measurement',
  'time-anomaly': 'Acquisition-time anomaly',
  'open-signal': 'Open trend signal',
};

export interface ReviewException {
  kind: ExceptionKind;
  containerId: number | null;
  containerLabel: string | null;
  measurementId: number | null;
  text: string;
}

export interface ReviewExceptions {
  testId: number;
  exceptions: ReviewException[];
  /** containers with no exception: plain, details one click away in the full list */
  plainContainers: number;
  containers: number;
  caution: string;
}

// ------------------------------------------------------------------ QA overview

export const overviewQuery = z
  .object({
    from: calendarDate('first day of the period'),
    to: calendarDate('last day of the period'),
  })
  .refine((p) => p.from <= p.to, { message: 'The period must end on or after its first day.', path: ['to'] });

export interface RateRow {
  key: string;
  label: string;
  count: number;
  total: number;
  /** count / total, null when total is 0 */
  rate: number | null;
}

export interface QaOverview {
  from: string;
  to: string;
  /** open investigations now, by age */
  openInvestigations: { id: number; number: string; lotNumber: string; openedAt: string; ageDays: number }[];
  investigationAgeBuckets: { label: string; count: number }[];
  /** lots received in the period with a verified test: passed at the first attempt, per source */
  firstPassBySource: RateRow[];
  /** measurements recorded in the period refused by the quality check, per instrument and per operator */
  invalidByInstrument: RateRow[];
  invalidByOperator: RateRow[];
  /** first certificates issued in the period: days from receipt */
  receiptToCertificate: { lotNumber: string; source: string; days: number; issuedAt: string }[];
  receiptToCertificateMedianDays: number | null;
  notes: string[];
}
