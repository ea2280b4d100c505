/**
 * Spectral residual outside the reference-set model (Q) and its limit, the chi-square quantile it
 * uses, and the rule that a criterion is never dropped: when the model cannot be built, the
 * result says so and does not pass.
 * Real data: ../shared/reference-data/nir-polyolefins (NIST ECAPS, Sutliff et al. 2023,
 * doi:10.18434/mds2-3022): 7 NIR replicate scans of each of five polyolefin pellet samples.
 */
import { chiSquaredDistributionTable } from 'simple-statistics';
import { describe, expect, it } from 'vitest';
import { chiSquareCdf, chiSquareQuantile } from '../../server/spectra/chi-square';
import { defaultNirMethod, type IdentityMethod, validateMethod } from '../../server/spectra/method';
import { buildDistanceModel } from '../../server/spectra/nir';
import { checkReferenceModel } from '../../server/spectra/reference-model';
import { leaveOneOutResiduals, residualLimit, residualQ } from '../../server/spectra/residual';
import { type PreparedReference, prepareReference, scoreAgainst } from '../../server/spectra/score';
import { gaussian, listSet, loadReference, seededRandom, stem } from './spectra-analysis-data';

const N = defaultNirMethod;

describe('chi-square quantile', () => {
  it('matches the printed chi-square table at every tabulated point (simple-statistics chiSquaredDistributionTable)', () => {
    // The table gives upper-tail probabilities, rounded to 2 decimals (halves rounded either way, so up to 0.0055
    // off), for 1..30 and more degrees of freedom. One entry is off by more: k 15 at 0.975 prints 6.27 where the
    // usual tables give 6.262.
    let checked = 0;
    const offByMoreThanRounding: string[] = [];
    for (const [dofText, row] of Object.entries(chiSquaredDistributionTable)) {
      const k = Number(dofText);
      for (const [upperText, value] of Object.entries(row as unknown as Record<string, number>)) {
        const upper = Number(upperText);
        const diff = Math.abs(chiSquareQuantile(1 - upper, k) - value);
        expect(diff, `k=${k}, upper tail ${upper}`).toBeLessThan(0.01);
        if (diff > 0.0055) offByMoreThanRounding.push(`${k}@${upper}`);
        checked++;
      }
    }
    expect(checked).toBeGreaterThan(300);
    expect(offByMoreThanRounding).toEqual(['15@0.975']);
  });

  it('exact cases: k = 2 is exponential (x = -2 ln(1 - p)); k = 1 is a squared normal (z 1.959964 at 0.975)', () => {
    for (const p of [0.5, 0.9, 0.95, 0.99, 0.999]) expect(chiSquareQuantile(p, 2)).toBeCloseTo(-2 * Math.log(1 - p), 9);
    // 1.959964 (two-sided 95 % normal quantile, Abramowitz & Stegun table 26.1) squared: 3.841459.
    expect(chiSquareQuantile(0.95, 1)).toBeCloseTo(1.959964 ** 2, 5);
    // Handbook values (NIST/SEMATECH e-Handbook 1.3.6.7.4, from memory): 23.209 (k 10, 0.99), 124.342 (k 100, 0.95).
    expect(chiSquareQuantile(0.99, 10)).toBeCloseTo(23.209, 3);
    expect(chiSquareQuantile(0.95, 100)).toBeCloseTo(124.342, 3);
    // Non-integer degrees of freedom (the residual limit's moment fit gives any h > 0): F(quantile) = p.
    for (const k of [0.37, 1.5, 3.3, 17.25, 640])
      for (const p of [0.9, 0.99]) expect(chiSquareCdf(chiSquareQuantile(p, k), k)).toBeCloseTo(p, 10);
    expect(() => chiSquareQuantile(1, 3)).toThrow(RangeError);
  });
});

describe('spectral residual (Q)', () => {
  const files = listSet('nir-polyolefins');
  const sampleOf = (f: string) => stem(f).replace(/_r\d$/, '');
  const prepared = new Map<string, PreparedReference>(
    files.map((f) => [f, prepareReference({ id: stem(f), materialId: sampleOf(f), spectrum: loadReference(f) }, N)]),
  );
  const set = (sample: string, except?: string) =>
    files.filter((f) => sampleOf(f) === sample && f !== except).map((f) => prepared.get(f)!);
  const PP = 'PP_HPU-kit_H0009PP';

  it('Q is the squared norm of the part a model does not describe (direct computation on a small example)', () => {
    // Three points on the line y = x in 3-D, one component: a point off the line by (0, 0, 2) has Q = 4.
    const pts = [Float64Array.from([0, 0, 0]), Float64Array.from([1, 1, 0]), Float64Array.from([2, 2, 0])];
    const model = buildDistanceModel(pts, 1);
    expect(residualQ(model, Float64Array.from([1, 1, 2]))).toBeCloseTo(4, 12);
    expect(residualQ(model, Float64Array.from([5, 5, 0]))).toBeCloseTo(0, 12);
    // Off the line within the plane z = 0: (1, 0, 0) is 1/sqrt(2) from the line, Q = 0.5.
    expect(residualQ(model, Float64Array.from([1, 0, 0]))).toBeCloseTo(0.5, 12);
  });

  it('leave-one-out residuals from one Gram matrix equal those of explicitly rebuilt models (real NIR spectra)', () => {
    const vectors = set(PP).map((r) => r.prepared.y);
    const fast = leaveOneOutResiduals(vectors, 3);
    vectors.forEach((v, o) => {
      const model = buildDistanceModel(
        vectors.filter((_, i) => i !== o),
        3,
      );
      expect(fast[o]).not.toBeNull();
      expect(Math.abs((fast[o] as number) - residualQ(model, v)) / residualQ(model, v)).toBeLessThan(1e-8);
    });
  });

  it('the limit is g times the chi-square quantile with g, h from the mean and variance of the leave-one-out residuals', () => {
    const loo = [1, 2, 3, 4, 5];
    // mean 3, variance 2.5: g = 2.5 / 6, h = 18 / 2.5 = 7.2.
    const lim = residualLimit(loo, 0.99);
    if (typeof lim === 'string') throw new Error(lim);
    expect(lim.g).toBeCloseTo(2.5 / 6, 12);
    expect(lim.h).toBeCloseTo(7.2, 12);
    expect(lim.limit).toBeCloseTo((2.5 / 6) * chiSquareQuantile(0.99, 7.2), 12);
    expect(residualLimit([2, 2, 2], 0.99)).toMatch(/no residual variation/);
    expect(residualLimit([1, 2], 0.99)).toMatch(/at least 3 references/);
  });

  it('a polyethylene spectrum against a polypropylene model fails on the residual; held-out polypropylene replicates pass', () => {
    const pe = files.filter((f) => !f.includes('/PP_'));
    for (const pp of ['PP_HPU-kit_H0009PP', 'PP_supplier1_S0011PP']) {
      for (const f of pe) {
        const r = scoreAgainst(loadReference(f), set(pp), N);
        expect(r.verdict).toBe('fail');
        const q = r.criteria.find((c) => c.key === 'residual')!;
        expect(q.verdict).toBe('fail');
        // Observed: 160 to 1,700 times the limit.
        expect(q.value).toBeGreaterThan(100);
      }
      // Each replicate held out from its own sample's model of the other six: residual below its limit.
      for (const f of files.filter((x) => sampleOf(x) === pp)) {
        const r = scoreAgainst(loadReference(f), set(pp, f), N);
        expect(r.verdict, `${stem(f)}: ${r.explanation.join(' ')}`).toBe('pass');
        const q = r.criteria.find((c) => c.key === 'residual')!;
        expect(q.value).toBeLessThan(1);
        expect(r.distance?.residual?.confidence).toBe(0.99);
        expect(r.distance!.residual!.q / r.distance!.residual!.limit).toBeCloseTo(q.value, 12);
      }
    }
  });
});

describe('the reference-set model is never dropped silently', () => {
  const files = listSet('nir-polyolefins').filter((f) => f.includes('PP_HPU-kit'));
  const refs = files.map((f) => ({ id: stem(f), spectrum: loadReference(f) }));

  it('with fewer references than the method needs, the result fails on "reference-model" and says why', () => {
    const r = scoreAgainst(loadReference(files[6]), refs.slice(0, 4), N);
    expect(r.verdict).toBe('fail');
    expect(r.criteria.map((c) => c.key)).toEqual(['correlation', 'reference-model']);
    expect(r.criteria[0].verdict).toBe('pass');
    expect(r.distance).toBeNull();
    expect(r.referenceModelProblems).toEqual([
      'The model of the reference set needs at least 6 approved references under this method; there are 4.',
    ]);
    expect(r.explanation.join(' ')).toMatch(/could not be built.*needs at least 6 approved references/);
  });

  it('checkReferenceModel says whether a method can be approved with these references, and why not', () => {
    expect(checkReferenceModel(refs, N)).toMatchObject({
      required: true,
      buildable: true,
      problems: [],
      components: 3,
    });
    expect(checkReferenceModel(refs, N).residualLimit).toBeGreaterThan(0);
    expect(checkReferenceModel(refs.slice(0, 5), N)).toMatchObject({
      buildable: false,
      problems: ['The model of the reference set needs at least 6 approved references under this method; there are 5.'],
    });
    // Seven copies of one spectrum: no variation to build components from.
    const copies = Array.from({ length: 7 }, (_, i) => ({ id: `copy-${i}`, spectrum: loadReference(files[0]) }));
    const dup = checkReferenceModel(copies, N);
    expect(dup.buildable).toBe(false);
    expect(dup.problems[0]).toMatch(/vary in only 0 independent way\(s\), but the method asks for 3 components/);
    // Two spectra, each copied: more references than minReferences, but only one independent direction.
    const two = [0, 1, 0, 1, 0, 1, 0].map((k, i) => ({ id: `two-${i}`, spectrum: loadReference(files[k]) }));
    expect(checkReferenceModel(two, N).problems[0]).toMatch(/vary in only 1 independent way/);
    // A reference that does not cover the method range is named.
    const short = { ...refs[0], id: 'short', spectrum: { ...refs[0].spectrum } };
    const keep = Array.from(short.spectrum.x, (x) => x >= 5000);
    short.spectrum = {
      ...short.spectrum,
      x: short.spectrum.x.filter((_, i) => keep[i]),
      y: short.spectrum.y.filter((_, i) => keep[i]),
    };
    const cut = checkReferenceModel([...refs.slice(1), short], N);
    expect(cut.buildable).toBe(false);
    expect(cut.problems[0]).toMatch(/^Reference short: The spectrum covers 500\d\.\d to/);
    // A method without set criteria needs no model.
    const plain: IdentityMethod = {
      ...structuredClone(N),
      thresholds: { ...N.thresholds, maxMahalanobis: null, residualConfidence: null },
    };
    expect(checkReferenceModel(refs.slice(0, 1), plain)).toMatchObject({ required: false, buildable: true });
  });

  it('a method may judge the residual without the distance; the confidence level is checked', () => {
    const qOnly: IdentityMethod = { ...structuredClone(N), thresholds: { ...N.thresholds, maxMahalanobis: null } };
    expect(validateMethod(qOnly)).toEqual([]);
    const r = scoreAgainst(loadReference(files[6]), refs.slice(0, 6), qOnly);
    expect(r.criteria.map((c) => c.key)).toEqual(['correlation', 'residual']);
    expect(validateMethod({ ...N, thresholds: { ...N.thresholds, residualConfidence: 1 } }).join(' ')).toMatch(
      /residualConfidence must be a confidence level from 0.5 to 0.9999/,
    );
    expect(
      validateMethod({
        ...N,
        distanceModel: null,
        thresholds: { ...N.thresholds, maxMahalanobis: null, residualConfidence: 0.99 },
      }).join(' '),
    ).toMatch(/residualConfidence needs a distanceModel/);
  });

  it('a caller comparing single references (specificity gate) leaves the set criteria out explicitly, and is told so', () => {
    const r = scoreAgainst(loadReference(files[6]), refs.slice(0, 1), N, { referenceSetCriteria: false });
    expect(r.criteria.map((c) => c.key)).toEqual(['correlation']);
    expect(r.verdict).toBe('pass');
    expect(r.explanation.join(' ')).toMatch(/Criteria on the whole reference set .* were not evaluated/);
  });

  it('noise alone: a replicate with added white noise (0.1 % of its range) stays inside the residual limit', () => {
    // Common practice: the limit should not fail a measurement for ordinary detector noise.
    const g = gaussian(seededRandom(5));
    const s = loadReference(files[6]);
    let lo = Infinity;
    let hi = -Infinity;
    for (const v of s.y) {
      lo = Math.min(lo, v);
      hi = Math.max(hi, v);
    }
    const noisy = { ...s, y: s.y.map((v) => v + 0.001 * (hi - lo) * g()) };
    const r = scoreAgainst(noisy, refs.slice(0, 6), N);
    expect(r.criteria.find((c) => c.key === 'residual')?.verdict).toBe('pass');
  });
});
