/**
 * The rules that turn measurements into a lot's identity outcome, as pure functions over rows
 * (no database), so service, lot page and tests all judge the same way.
 *
 * - Scope of an attempt: every container of the lot, except an attempt QA authorised as a
 *   retest after an invalidated result, whose scope is the containers QA named.
 * - A container's result in an attempt is its latest measurement in that attempt; an
 *   'invalid' measurement (quality gate) is neither pass nor fail and needs a re-measurement.
 * - A container's effective result for the lot is its result in the last VERIFIED attempt
 *   whose scope includes it. Returned attempts never count; originals stay on record.
 * - The lot passes identity only when every container's effective result is pass
 *   (EU GMP Annex 8 para 2 and 21 CFR 211.84(d)(1): identity of the contents of every container).
 */
import type { MeasurementSummary, MeasurementVerdict } from './contract';
import type { TestRow } from './repo';

export interface ContainerRef {
  id: number;
  seq: number;
  label: string;
}

export interface AttemptScope {
  testId: number;
  /** null = every container of the lot. */
  containerIds: number[] | null;
}

export function inScope(scope: AttemptScope, containerId: number): boolean {
  return scope.containerIds === null || scope.containerIds.includes(containerId);
}

/** Latest measurement per container within one attempt. */
export function latestByContainer(measurements: MeasurementSummary[], testId: number): Map<number, MeasurementSummary> {
  const out = new Map<number, MeasurementSummary>();
  for (const m of measurements) {
    if (m.testId !== testId) continue;
    const prev = out.get(m.containerId);
    if (!prev || m.id > prev.id) out.set(m.containerId, m);
  }
  return out;
}

export interface Readiness {
  ready: boolean;
  /** Containers in scope without any measurement in this attempt. */
  missing: ContainerRef[];
  /** Containers whose latest measurement was refused by the quality gate. */
  invalid: ContainerRef[];
  measured: number;
  inScope: number;
}

/** Whether an attempt can be signed "performed": every container in scope has a pass or fail as its latest result. */
export function readiness(
  containers: ContainerRef[],
  scope: AttemptScope,
  measurements: MeasurementSummary[],
): Readiness {
  const latest = latestByContainer(measurements, scope.testId);
  const missing: ContainerRef[] = [];
  const invalid: ContainerRef[] = [];
  let count = 0;
  let measured = 0;
  for (const c of containers) {
    if (!inScope(scope, c.id)) continue;
    count++;
    const m = latest.get(c.id);
    if (!m) missing.push(c);
    else if (m.verdict === 'invalid') invalid.push(c);
    else measured++;
  }
  return {
    ready: count > 0 && missing.length === 0 && invalid.length === 0,
    missing,
    invalid,
    measured,
    inScope: count,
  };
}

export interface EffectiveResult {
  verdict: Exclude<MeasurementVerdict, 'invalid'>;
  measurementId: number;
  testId: number;
}

/**
 * Effective result per container over the verified attempts (in attempt order), plus
 * optionally one more attempt being verified right now (treated as verified).
 */
export function effectiveResults(
  containers: ContainerRef[],
  tests: Pick<TestRow, 'id' | 'attempt' | 'status'>[],
  scopes: Map<number, AttemptScope>,
  measurements: MeasurementSummary[],
  alsoCounting?: number,
): Map<number, EffectiveResult | null> {
  const out = new Map<number, EffectiveResult | null>(containers.map((c) => [c.id, null]));
  const counted = [...tests]
    .filter((t) => t.status === 'verified' || t.id === alsoCounting)
    .sort((a, b) => a.attempt - b.attempt);
  for (const t of counted) {
    const scope = scopes.get(t.id) ?? { testId: t.id, containerIds: null };
    const latest = latestByContainer(measurements, t.id);
    for (const c of containers) {
      if (!inScope(scope, c.id)) continue;
      const m = latest.get(c.id);
      if (m && m.verdict !== 'invalid') out.set(c.id, { verdict: m.verdict, measurementId: m.id, testId: t.id });
    }
  }
  return out;
}

export type LotOutcome =
  | { kind: 'passed' }
  | { kind: 'failed'; failing: { containerId: number; measurementId: number }[] }
  | { kind: 'incomplete'; missing: number[] };

export function lotOutcome(containers: ContainerRef[], effective: Map<number, EffectiveResult | null>): LotOutcome {
  const missing: number[] = [];
  const failing: { containerId: number; measurementId: number }[] = [];
  for (const c of containers) {
    const e = effective.get(c.id);
    if (!e) missing.push(c.id);
    else if (e.verdict === 'fail') failing.push({ containerId: c.id, measurementId: e.measurementId });
  }
  if (failing.length) return { kind: 'failed', failing };
  if (missing.length) return { kind: 'incomplete', missing };
  return { kind: 'passed' };
}

/** Container labels in a file name: lot number + '-' + 3-digit sequence, not followed by another digit. */
export const LABEL_PATTERN = /L-\d{4}-\d{5}-\d{3}(?!\d)/gi;

export function labelsInFileName(fileName: string): string[] {
  const base = fileName.replace(/^.*[\\/]/, '');
  return [...new Set([...base.matchAll(LABEL_PATTERN)].map((m) => m[0].toUpperCase()))];
}
