/**
 * The lot and container state machine (server/modules/lots/state.ts; docs/architecture.md, "The lot
 * and container state machine"): which transitions are allowed, which are refused, and that the
 * list matches the database guard of the lot (db/migrations/145_retest.ts, lotGuard145).
 */
import { describe, expect, it } from 'vitest';
import { lotGuard145 } from '../../db/migrations/145_retest';
import { CONTAINER_STATUSES } from '../../server/modules/sampling/contract';
import { IDENTITY_STATUSES, LOT_STATUSES } from '../../server/modules/lots/contract';
import {
  CONTAINER_TRANSITIONS,
  IDENTITY_TRANSITIONS,
  LOT_TRANSITIONS,
  containerTransitionRefusal,
  lotTransitionRefusal,
} from '../../server/modules/lots/state';

const inQuarantine = (identityStatus: (typeof IDENTITY_STATUSES)[number]) =>
  ({ status: 'quarantine', identityStatus }) as const;

describe('lot identity status transitions', () => {
  it('allows the identity flow: awaiting testing, testing, awaiting verification, passed or failed', () => {
    expect(lotTransitionRefusal(inQuarantine('awaiting-testing'), { identityStatus: 'testing' })).toBeNull();
    expect(lotTransitionRefusal(inQuarantine('testing'), { identityStatus: 'awaiting-verification' })).toBeNull();
    expect(lotTransitionRefusal(inQuarantine('awaiting-verification'), { identityStatus: 'passed' })).toBeNull();
    expect(lotTransitionRefusal(inQuarantine('awaiting-verification'), { identityStatus: 'failed' })).toBeNull();
  });

  it('allows a returned attempt, a retest and a rejection after a confirmed failure', () => {
    expect(lotTransitionRefusal(inQuarantine('awaiting-verification'), { identityStatus: 'testing' })).toBeNull();
    expect(
      lotTransitionRefusal(inQuarantine('awaiting-verification'), { identityStatus: 'retest-authorised' }),
    ).toBeNull();
    expect(lotTransitionRefusal(inQuarantine('failed'), { identityStatus: 'retest-authorised' })).toBeNull();
    expect(lotTransitionRefusal(inQuarantine('retest-authorised'), { identityStatus: 'testing' })).toBeNull();
    expect(lotTransitionRefusal(inQuarantine('failed'), { status: 'rejected', identityStatus: 'rejected' })).toBeNull();
  });

  it('lets a lot stay in its status (a new attempt on a lot already in testing)', () => {
    expect(lotTransitionRefusal(inQuarantine('testing'), { identityStatus: 'testing' })).toBeNull();
  });

  it('refuses skipping the verification, reopening a passed lot and leaving a rejected one', () => {
    expect(lotTransitionRefusal(inQuarantine('testing'), { identityStatus: 'passed' })).toBe(
      'A lot whose identity status is testing cannot move to passed.',
    );
    expect(lotTransitionRefusal(inQuarantine('awaiting-testing'), { identityStatus: 'passed' })).toMatch(
      /cannot move to passed/,
    );
    expect(lotTransitionRefusal(inQuarantine('passed'), { identityStatus: 'testing' })).toMatch(
      /identity status is passed cannot move to testing/,
    );
    expect(lotTransitionRefusal(inQuarantine('failed'), { identityStatus: 'passed' })).toMatch(/cannot move/);
    expect(
      lotTransitionRefusal({ status: 'rejected', identityStatus: 'rejected' }, { identityStatus: 'testing' }),
    ).toMatch(/identity status is rejected cannot move to testing/);
  });
});

describe('lot disposition status transitions', () => {
  it('releases only a lot whose identity passed, or whose replacing identity test conforms (material not identified by IR)', () => {
    expect(lotTransitionRefusal(inQuarantine('passed'), { status: 'released' })).toBeNull();
    expect(lotTransitionRefusal(inQuarantine('awaiting-verification'), { status: 'released' })).toBe(
      'Only a lot whose identity passed (or, for a material not identified by IR, whose replacing identity test conforms) can be released.',
    );
    expect(lotTransitionRefusal(inQuarantine('failed'), { status: 'released' })).toMatch(/identity passed/);
    expect(
      lotTransitionRefusal(
        inQuarantine('awaiting-testing'),
        { status: 'released' },
        { replacingIdentityConforms: true },
      ),
    ).toBeNull();
    expect(
      lotTransitionRefusal(
        inQuarantine('awaiting-testing'),
        { status: 'released' },
        { replacingIdentityConforms: false },
      ),
    ).toMatch(/replacing identity test conforms/);
  });

  it('rejects a lot only together with its identity status', () => {
    expect(lotTransitionRefusal(inQuarantine('passed'), { status: 'rejected', identityStatus: 'rejected' })).toBeNull();
    expect(lotTransitionRefusal(inQuarantine('passed'), { status: 'rejected' })).toBe(
      'A lot is rejected together with its identity status.',
    );
  });

  it('returns a released lot to quarantine and awaiting testing only through a retest of its current release', () => {
    const released = { status: 'released', identityStatus: 'passed' } as const;
    const back = { status: 'quarantine', identityStatus: 'awaiting-testing' } as const;
    expect(lotTransitionRefusal(released, back, { retestOfCurrentRelease: true })).toBeNull();
    expect(lotTransitionRefusal(released, back)).toBe(
      'A released lot returns to quarantine only through a signed retest of its current release.',
    );
    expect(lotTransitionRefusal(released, { status: 'quarantine' }, { retestOfCurrentRelease: true })).toMatch(
      /only through a signed retest/,
    );
    expect(lotTransitionRefusal(inQuarantine('passed'), { identityStatus: 'awaiting-testing' })).toBe(
      'Identity goes back from passed to awaiting testing only when a released lot is retested.',
    );
  });

  it('never moves a released or rejected lot to another disposition', () => {
    expect(lotTransitionRefusal({ status: 'released', identityStatus: 'passed' }, { status: 'rejected' })).toMatch(
      /released cannot become rejected/,
    );
    expect(lotTransitionRefusal({ status: 'rejected', identityStatus: 'rejected' }, { status: 'released' })).toMatch(
      /rejected cannot become released/,
    );
  });
});

describe('container status transitions', () => {
  it('allows quarantine -> sampled -> released or rejected, and a block by a hold and back to the former status', () => {
    expect(containerTransitionRefusal('quarantine', 'sampled')).toBeNull();
    expect(containerTransitionRefusal('sampled', 'released')).toBeNull();
    expect(containerTransitionRefusal('sampled', 'blocked')).toBeNull();
    expect(containerTransitionRefusal('quarantine', 'blocked')).toBeNull();
    expect(containerTransitionRefusal('blocked', 'sampled')).toBeNull();
    expect(containerTransitionRefusal('blocked', 'quarantine')).toBeNull();
    expect(containerTransitionRefusal('blocked', 'rejected')).toBeNull();
  });

  it('puts a released container back under test only in a retest of its lot', () => {
    expect(containerTransitionRefusal('released', 'sampled', { retest: true })).toBeNull();
    expect(containerTransitionRefusal('released', 'quarantine', { retest: true })).toBeNull();
    expect(containerTransitionRefusal('released', 'sampled')).toBe(
      'A released container becomes sampled only through a retest of its lot.',
    );
    expect(containerTransitionRefusal('released', 'rejected', { retest: true })).toMatch(
      /released cannot become rejected/,
    );
  });

  it('refuses leaving rejected and releasing a blocked container', () => {
    expect(containerTransitionRefusal('rejected', 'quarantine')).toMatch(/rejected cannot become quarantine/);
    expect(containerTransitionRefusal('blocked', 'released')).toMatch(/blocked cannot become released/);
  });

  it('has a row for every container status and names only known statuses', () => {
    expect(Object.keys(CONTAINER_TRANSITIONS).sort()).toEqual([...CONTAINER_STATUSES].sort());
    for (const to of Object.values(CONTAINER_TRANSITIONS).flat()) expect(CONTAINER_STATUSES).toContain(to);
  });
});

describe('the state machine and the database guard of the lot agree', () => {
  const guard = lotGuard145();
  const pairs = (column: string) =>
    guard
      .states!.find((s) => s.column === column)!
      .transitions.map(([a, b]) => `${a}->${b}`)
      .sort();
  const ours = (t: Record<string, readonly string[]>) =>
    Object.entries(t)
      .flatMap(([a, bs]) => bs.map((b) => `${a}->${b}`))
      .sort();

  it('lists the same identity status transitions as the trigger', () => {
    expect(Object.keys(IDENTITY_TRANSITIONS).sort()).toEqual([...IDENTITY_STATUSES].sort());
    expect(ours(IDENTITY_TRANSITIONS)).toEqual(pairs('identity_status'));
  });

  it('lists the same disposition status transitions as the trigger', () => {
    expect(Object.keys(LOT_TRANSITIONS).sort()).toEqual([...LOT_STATUSES].sort());
    expect(ours(LOT_TRANSITIONS)).toEqual(pairs('status'));
  });
});
