/**
 * Control-chart maths of trending (server/modules/trending/control-chart.ts).
 * Sources beside each check:
 *  - limits: the worked example of the NIST/SEMATECH e-Handbook of Statistical Methods, 6.3.2.2
 *    (published answer, checked at the end of this file);
 *  - d2, d3, D4 for n = 2: the tabulated values (ASTM E2587 and Montgomery, Introduction to
 *    Statistical Quality Control, appendix table of factors; from memory) are checked against
 *    their closed forms for the range of two independent normal values: E|X1 - X2| = 2 sigma / sqrt(pi),
 *    Var|X1 - X2| = sigma^2 (2 - 4 / pi) (mathematical fact), and against a simulation.
 *  - the run rules: Western Electric Statistical Quality Control Handbook (1956) rules 1 to 4 and
 *    Nelson (1984) test 3, as their texts are quoted in RULES (from memory); each rule is tried on
 *    a series built to just meet it and on one that just misses it.
 */
import { describe, expect, it } from 'vitest';
import {
  chartLimits,
  D2_N2,
  D3_N2,
  D4_N2,
  evaluateRules,
  limitsFrom,
  MIN_POINTS,
  movingRanges,
  RULES,
  type Limits,
} from '../../server/modules/trending/control-chart';

describe('constants for n = 2', () => {
  it('d2 = 2/sqrt(pi) = 1.128 (to the table’s 3 decimals)', () => {
    expect(D2_N2).toBeCloseTo(2 / Math.sqrt(Math.PI), 3);
  });
  it('d3 = sqrt(2 - 4/pi) = 0.853 and D4 = 1 + 3 d3/d2 = 3.267', () => {
    const d2 = 2 / Math.sqrt(Math.PI);
    const d3 = Math.sqrt(2 - 4 / Math.PI);
    expect(D3_N2).toBeCloseTo(d3, 3);
    expect(D4_N2).toBeCloseTo(1 + (3 * d3) / d2, 3);
    // the 2.66 factor of the individuals chart: 3 / d2
    expect(3 / D2_N2).toBeCloseTo(2.66, 2);
  });
  it('a simulation of standard normal pairs gives a mean range near d2', () => {
    // a seeded generator (mulberry32) and Box-Muller, so the check is repeatable
    let s = 12345;
    const u = () => {
      s = (s + 0x6d2b79f5) | 0;
      let t = Math.imul(s ^ (s >>> 15), 1 | s);
      t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
      return (((t ^ (t >>> 14)) >>> 0) + 1) / 4294967297;
    };
    const normal = () => Math.sqrt(-2 * Math.log(u())) * Math.cos(2 * Math.PI * u());
    let sum = 0;
    const n = 200_000;
    for (let i = 0; i < n; i++) sum += Math.abs(normal() - normal());
    expect(sum / n).toBeGreaterThan(1.118);
    expect(sum / n).toBeLessThan(1.138);
  });
});

describe('limits', () => {
  it('worked by hand: 10, 12, 11, 13, 12', () => {
    // mean 58/5 = 11.6; moving ranges 2, 1, 2, 1 -> MR-bar 1.5; sigma 1.5/1.128 = 1.32979
    expect(movingRanges([10, 12, 11, 13, 12])).toEqual([null, 2, 1, 2, 1]);
    const l = limitsFrom([10, 12, 11, 13, 12]);
    expect(l.centre).toBeCloseTo(11.6, 10);
    expect(l.mrBar).toBeCloseTo(1.5, 10);
    expect(l.sigma).toBeCloseTo(1.5 / 1.128, 10);
    expect(l.ucl).toBeCloseTo(11.6 + 2.6596 * 1.5, 3);
    expect(l.lcl).toBeCloseTo(11.6 - 2.6596 * 1.5, 3);
    expect(l.mrUcl).toBeCloseTo(3.267 * 1.5, 10);
  });
  it('come from the first 20 points until QA fixes a baseline, and are absent before 20 points', () => {
    const xs = Array.from({ length: 30 }, (_, i) => (i < 20 ? 1 + (i % 2) * 0.1 : 5));
    expect(chartLimits(xs.slice(0, 19))).toBeNull();
    const first = chartLimits(xs)!;
    expect(first.points).toBe(20);
    expect(first.centre).toBeCloseTo(1.05, 10);
    const fixed = chartLimits(xs, [2, 3, 2, 3])!;
    expect(fixed.centre).toBe(2.5);
    expect(fixed.points).toBe(4);
  });
});

/** Limits with centre 0 and sigma 1 so that values read as z. */
const UNIT: Limits = { centre: 0, sigma: 1, mrBar: D2_N2, ucl: 3, lcl: -3, mrUcl: D4_N2 * D2_N2, points: 20 };
/** 20 quiet points alternating around the centre (no rule can fire on them). */
const quiet = () => Array.from({ length: 20 }, (_, i) => (i % 2 ? -0.2 : 0.2));
const rulesAt = (xs: number[], index: number) =>
  evaluateRules(xs, UNIT)
    .filter((h) => h.index === index)
    .map((h) => h.rule);

describe('run rules', () => {
  it('fire nothing on a quiet series, and nothing before 20 points', () => {
    expect(evaluateRules(quiet(), UNIT)).toEqual([]);
    expect(evaluateRules([...quiet().slice(0, 18), 9], UNIT)).toEqual([]);
  });
  it('WE rule 1: one point beyond 3 sigma (3.01 fires, 2.99 does not)', () => {
    expect(rulesAt([...quiet(), 3.01], 20)).toContain('beyond-3-sigma');
    expect(rulesAt([...quiet(), -3.01], 20)).toContain('beyond-3-sigma');
    expect(rulesAt([...quiet(), 2.99], 20)).not.toContain('beyond-3-sigma');
  });
  it('WE rule 2: two of three beyond 2 sigma on one side', () => {
    expect(rulesAt([...quiet(), 2.1, 0.2, 2.2], 22)).toContain('two-of-three-beyond-2-sigma');
    // on opposite sides: no signal
    expect(rulesAt([...quiet(), 2.1, 0.2, -2.2], 22)).not.toContain('two-of-three-beyond-2-sigma');
    // only one of three beyond 2 sigma
    expect(rulesAt([...quiet(), 1.9, 0.2, 2.2], 22)).not.toContain('two-of-three-beyond-2-sigma');
  });
  it('WE rule 3: four of five beyond 1 sigma on one side', () => {
    const hit = evaluateRules([...quiet(), -1.1, -1.2, 0, -1.3, -1.4], UNIT).find(
      (h) => h.rule === 'four-of-five-beyond-1-sigma',
    );
    expect(hit).toEqual({ rule: 'four-of-five-beyond-1-sigma', index: 24, points: [20, 21, 23, 24] });
    expect(rulesAt([...quiet(), -1.1, -1.2, 0, 0, -1.4], 24)).not.toContain('four-of-five-beyond-1-sigma');
  });
  it('WE rule 4: eight in a row on one side (seven do not)', () => {
    const up = (n: number) => Array.from({ length: n }, (_, i) => (i % 2 ? 0.3 : 0.5));
    expect(rulesAt([...quiet(), ...up(8)], 27)).toContain('eight-one-side');
    expect(evaluateRules([...quiet(), ...up(7), -0.1], UNIT).map((h) => h.rule)).not.toContain('eight-one-side');
  });
  it('Nelson test 3: six in a row steadily falling (a flat step breaks it)', () => {
    expect(rulesAt([...quiet(), 0.5, 0.4, 0.3, 0.2, 0.1, 0.0], 25)).toContain('six-trending');
    expect(rulesAt([...quiet(), 0.5, 0.4, 0.3, 0.3, 0.1, 0.0], 25)).not.toContain('six-trending');
  });
  it('moving range above D4 MR-bar', () => {
    expect(rulesAt([...quiet(), 0.2, 0.2 + UNIT.mrUcl + 0.01], 21)).toContain('moving-range');
    expect(rulesAt([...quiet(), 0.2, 0.2 + UNIT.mrUcl - 0.01], 21)).not.toContain('moving-range');
  });
  it('every rule names its source, and says "from memory" where it was not checked here', () => {
    for (const r of Object.values(RULES)) {
      expect(r.source.length).toBeGreaterThan(10);
      if (r.key !== 'moving-range') expect(r.source).toMatch(/from memory/);
    }
    expect(MIN_POINTS).toBe(20);
  });
});

/**
 * A published worked example: NIST/SEMATECH e-Handbook of Statistical Methods, section 6.3.2.2
 * "Individuals Control Charts" (US government work, public domain): the flow rate of the first
 * 10 batches of a new process, with the published answer x-bar = 50.81, MR-bar = 1.8778,
 * UCL = 55.8041, LCL = 45.8159. The same figures are reproduced by several independent open-source reimplementations of that example.
 * The handbook's chart shows every batch inside its limits.
 */
describe('NIST/SEMATECH e-Handbook 6.3.2.2 worked example (flow rate, 10 batches)', () => {
  const flowRate = [49.6, 47.6, 49.9, 51.3, 47.8, 51.2, 52.6, 52.4, 53.6, 52.1];
  it('moving ranges, centre, MR-bar and limits as published', () => {
    const mr = movingRanges(flowRate).slice(1) as number[];
    // published moving ranges: 2.0, 2.3, 1.4, 3.5, 3.4, 1.4, 0.2, 1.2, 1.5
    expect(mr.map((x) => Math.round(x * 10) / 10)).toEqual([2.0, 2.3, 1.4, 3.5, 3.4, 1.4, 0.2, 1.2, 1.5]);
    const l = limitsFrom(flowRate);
    expect(l.centre).toBeCloseTo(50.81, 10);
    expect(l.mrBar).toBeCloseTo(1.8778, 4);
    expect(l.ucl).toBeCloseTo(55.8041, 4);
    expect(l.lcl).toBeCloseTo(45.8159, 4);
    // the moving-range limit: D4 = 3.267 times the published MR-bar
    expect(l.mrUcl).toBeCloseTo(3.267 * 1.8778, 3);
  });
  it('every batch lies inside its limits, as the handbook’s chart shows; a 20-point series built from it raises no 3-sigma signal', () => {
    const l = limitsFrom(flowRate);
    expect(flowRate.every((x) => x < l.ucl && x > l.lcl)).toBe(true);
    // the rules only look at 20 points or more: the published batches repeated twice, against the published limits
    const hits = evaluateRules([...flowRate, ...flowRate], l).map((h) => h.rule);
    expect(hits).not.toContain('beyond-3-sigma');
    expect(hits).not.toContain('moving-range');
    // one batch moved just beyond the published UCL fires rule 1 at that point
    const moved = [...flowRate, ...flowRate.slice(0, 9), 55.81];
    expect(
      evaluateRules(moved, l)
        .filter((h) => h.index === 19)
        .map((h) => h.rule),
    ).toContain('beyond-3-sigma');
  });
});
