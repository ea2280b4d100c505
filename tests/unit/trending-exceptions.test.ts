/**
 * Review by exception (server/modules/trending/exceptions.ts): the near-limit margin is
 * Drumline's own default (docs/trending.md), not a standard; these checks pin it down on both
 * kinds of criterion, and the trended figures read from a stored identity result.
 */
import { describe, expect, it } from 'vitest';
import { NEAR_LIMIT, nearLimit } from '../../server/modules/trending/exceptions';
import { metricsOf } from '../../server/modules/trending/repo';

const crit = (value: number, limit: number, comparison: '>=' | '<=', verdict = 'pass') => ({
  key: 'correlation',
  name: 'Correlation with the reference',
  value,
  limit,
  comparison,
  verdict,
});

describe('near-limit margin', () => {
  it('a ">=" criterion is near within a quarter of the way from its limit to 1', () => {
    expect(NEAR_LIMIT.towardsOne).toBe(0.25);
    // limit 0.95: near below 0.95 + 0.25 * 0.05 = 0.9625
    expect(nearLimit(crit(0.962, 0.95, '>='))).toBe(true);
    expect(nearLimit(crit(0.963, 0.95, '>='))).toBe(false);
  });
  it('a "<=" criterion is near at 80 % of its limit or more', () => {
    expect(nearLimit(crit(0.8, 1, '<='))).toBe(true);
    expect(nearLimit(crit(0.79, 1, '<='))).toBe(false);
  });
  it('a failing criterion is not an exception of this kind (the failure itself is shown)', () => {
    expect(nearLimit(crit(0.94, 0.95, '>=', 'fail'))).toBe(false);
  });
});

describe('trended figures of a stored result', () => {
  it('reads r, the derivative r and the largest absolute band shift of the best reference', () => {
    const stored = JSON.stringify({
      bestReferenceId: '7',
      references: [
        { referenceId: '3', correlation: 0.5, derivativeCorrelation: 0.4, bands: [{ shift: 9 }] },
        {
          referenceId: '7',
          correlation: 0.991,
          derivativeCorrelation: 0.95,
          bands: [{ shift: -1.5 }, { shift: 0.4 }, { shift: null }],
        },
      ],
    });
    expect(metricsOf(stored)).toEqual({ correlation: 0.991, 'derivative-correlation': 0.95, 'band-shift': 1.5 });
    expect(metricsOf('{}')).toEqual({ correlation: null, 'derivative-correlation': null, 'band-shift': null });
  });
});
