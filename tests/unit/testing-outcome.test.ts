/**
 * The pure rules of testing outcomes (server/modules/testing/outcome.ts):
 * identity of every container (EU GMP Annex 8 para 2; 21 CFR 211.84(d)(1)); returned attempts
 * never count; a retest attempt authorised by QA replaces only the named containers' results
 * while the originals stay on record (FDA OOS guidance; 21 CFR 211.194); a quality-gate
 * 'invalid' measurement is neither pass nor fail (docs/architecture.md, "The identity flow").
 */
import { describe, expect, it } from 'vitest';
import {
  effectiveResults,
  labelsInFileName,
  lotOutcome,
  readiness,
  type AttemptScope,
} from '../../server/modules/testing/outcome';
import type { MeasurementSummary } from '../../server/modules/testing/contract';

const containers = [1, 2, 3].map((id) => ({ id, seq: id, label: `L-2026-00007-00${id}` }));
let next = 1;
function m(testId: number, containerId: number, verdict: 'pass' | 'fail' | 'invalid'): MeasurementSummary {
  return {
    id: next++,
    testId,
    containerId,
    label: '',
    verdict,
    matchScore: null,
    file: { id: 0, name: '', sha256: '', size: 0 },
    instrumentId: 1,
    instrumentCheckId: 1,
    methodId: 1,
    referenceIds: [],
    engineVersion: 'x',
    authorisedByInvestigationId: null,
    createdBy: { id: 1, name: '' },
    createdAt: '',
  };
}
const all: AttemptScope = { testId: 1, containerIds: null };

describe('file names to container labels', () => {
  it('finds the label anywhere in the name, any case, but not inside a longer number', () => {
    expect(labelsInFileName('L-2026-00042-007.csv')).toEqual(['L-2026-00042-007']);
    expect(labelsInFileName('scan_l-2026-00042-007_final.jdx')).toEqual(['L-2026-00042-007']);
    expect(labelsInFileName('C:\\exports\\L-2026-00042-007 (2).csv')).toEqual(['L-2026-00042-007']);
    expect(labelsInFileName('L-2026-00042-0071.csv')).toEqual([]);
    expect(labelsInFileName('L-2026-00042-001_L-2026-00042-002.csv')).toEqual(['L-2026-00042-001', 'L-2026-00042-002']);
    expect(labelsInFileName('spectrum.csv')).toEqual([]);
  });
});

describe('readiness to sign performed', () => {
  it('needs a pass or fail as the latest result of every container in scope', () => {
    const ms = [m(1, 1, 'pass'), m(1, 2, 'invalid')];
    const r = readiness(containers, all, ms);
    expect(r).toMatchObject({ ready: false, measured: 1, inScope: 3 });
    expect(r.invalid.map((c) => c.id)).toEqual([2]);
    expect(r.missing.map((c) => c.id)).toEqual([3]);
    const r2 = readiness(containers, all, [...ms, m(1, 2, 'fail'), m(1, 3, 'pass')]);
    expect(r2.ready).toBe(true);
    // a later invalid measurement makes the container not ready again
    expect(readiness(containers, all, [...ms, m(1, 2, 'pass'), m(1, 3, 'pass'), m(1, 3, 'invalid')]).ready).toBe(false);
  });

  it('a retest attempt needs only the containers QA named', () => {
    const scope: AttemptScope = { testId: 2, containerIds: [3] };
    expect(readiness(containers, scope, [m(2, 3, 'pass')])).toMatchObject({ ready: true, inScope: 1 });
  });
});

describe('lot outcome', () => {
  it('passes only when every container passes in verified attempts; returned attempts do not count', () => {
    const tests = [
      { id: 1, attempt: 1, status: 'returned' as const },
      { id: 2, attempt: 2, status: 'verified' as const },
    ];
    const scopes = new Map([
      [1, { testId: 1, containerIds: null }],
      [2, { testId: 2, containerIds: null }],
    ]);
    const ms = [m(1, 1, 'pass'), m(1, 2, 'pass'), m(1, 3, 'pass'), m(2, 1, 'pass'), m(2, 2, 'pass')];
    const eff = effectiveResults(containers, tests, scopes, ms);
    expect(eff.get(3)).toBeNull();
    expect(lotOutcome(containers, eff)).toEqual({ kind: 'incomplete', missing: [3] });
    const eff2 = effectiveResults(containers, tests, scopes, [...ms, m(2, 3, 'pass')]);
    expect(lotOutcome(containers, eff2)).toEqual({ kind: 'passed' });
  });

  it('one failing container fails the lot; an authorised retest replaces only that container, and the attempt being verified counts', () => {
    const tests = [
      { id: 1, attempt: 1, status: 'verified' as const },
      { id: 2, attempt: 2, status: 'awaiting-verification' as const },
    ];
    const scopes = new Map<number, AttemptScope>([
      [1, { testId: 1, containerIds: null }],
      [2, { testId: 2, containerIds: [3] }],
    ]);
    const fail = m(1, 3, 'fail');
    const ms = [m(1, 1, 'pass'), m(1, 2, 'pass'), fail];
    const before = lotOutcome(containers, effectiveResults(containers, tests, scopes, ms));
    expect(before).toEqual({ kind: 'failed', failing: [{ containerId: 3, measurementId: fail.id }] });
    const retest = m(2, 3, 'pass');
    // not yet verified: the original failure still stands
    expect(lotOutcome(containers, effectiveResults(containers, tests, scopes, [...ms, retest])).kind).toBe('failed');
    // counted as the attempt being verified now
    const eff = effectiveResults(containers, tests, scopes, [...ms, retest, m(2, 1, 'fail')], 2);
    expect(lotOutcome(containers, eff)).toEqual({ kind: 'passed' }); // container 1 is outside the retest scope: its stray row is ignored
    expect(eff.get(3)).toMatchObject({ verdict: 'pass', testId: 2 });
  });
});

describe('received date', () => {
  it('"today" is the calendar day at the site, not in UTC', async () => {
    const { siteToday } = await import('../../server/modules/lots/service');
    // 23:30 UTC on 1 March is already 2 March in Berlin (CET = UTC+1) and still 1 March in New York.
    const t = new Date('2026-03-01T23:30:00Z');
    expect(siteToday('Europe/Berlin', t)).toBe('2026-03-02');
    expect(siteToday('America/New_York', t)).toBe('2026-03-01');
    expect(siteToday('UTC', t)).toBe('2026-03-01');
  });
});
