/**
 * Shape of an identity result: plain data, ready to store as JSON with the test
 * record and to print on the identity certificate.
 */
import type { BandRow, ExtraBand } from './bands';
import type { QualityReport } from './quality';

export type CriterionKey =
  | 'correlation'
  | 'derivative-correlation'
  | 'band-concordance'
  | 'relative-intensity'
  | 'extra-bands'
  | 'mahalanobis'
  | 'residual'
  | 'reference-model';

export interface Criterion {
  key: CriterionKey;
  /** Plain-words name, e.g. "Correlation coefficient (r) with the reference". */
  name: string;
  value: number;
  limit: number;
  /** How value is compared with limit for a pass. */
  comparison: '>=' | '<=';
  verdict: 'pass' | 'fail';
  /** Reference the value was computed against; null for criteria on the whole set. */
  referenceId: string | null;
}

export interface ReferenceScore {
  referenceId: string;
  /** How people name the reference (e.g. its code), when the caller gave one. */
  referenceLabel?: string;
  materialId: string | null;
  verdict: 'pass' | 'fail';
  correlation: number;
  derivativeCorrelation: number | null;
  criteria: Criterion[];
  bands: BandRow[];
  extraBands: ExtraBand[];
}

export interface DistanceResult {
  /** Mahalanobis distance in RMS standard deviations over the components. */
  value: number;
  components: number;
  references: number;
  /** Spectral residual outside the model (Q) and its limit from the reference set, when the method judges it. */
  residual?: {
    q: number;
    limit: number;
    /** q / limit: the criterion's value (at most 1 passes). */
    ratio: number;
    confidence: number;
  } | null;
}

export interface IdentityResult {
  /** pass only if every criterion passes against at least one reference; invalid = refused measurement. */
  verdict: 'pass' | 'fail' | 'invalid';
  engineVersion: string;
  quality: QualityReport;
  /** The passing reference with the highest correlation, else the closest one; null when invalid. */
  bestReferenceId: string | null;
  /** Criteria of the best reference plus criteria on the whole reference set. */
  criteria: Criterion[];
  /** Every reference, in the order given. */
  references: ReferenceScore[];
  /** Band table against the best reference. */
  bands: BandRow[];
  extraBands: ExtraBand[];
  distance: DistanceResult | null;
  /** Why the reference-set model the method asks for could not be built (empty when it was, or is not needed). */
  referenceModelProblems?: string[];
  explanation: string[];
}
