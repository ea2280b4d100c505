/**
 * NIR method and the Mahalanobis distance on principal components
 * (../shared/domain-facts.md 2: D^2 = (x - mean)' S^-1 (x - mean) on PCA scores, limit often 3, common practice),
 * checked against a direct computation with mathjs and on the NIST polyolefin pellets of
 * ../shared/reference-data/nir-polyolefins (7 replicates per sample; Sutliff et al. 2023, doi:10.18434/mds2-3022).
 */
import { inv, multiply } from 'mathjs';
import { describe, expect, it } from 'vitest';
import { buildLibrary } from '../../server/spectra/library';
import { defaultNirMethod } from '../../server/spectra/method';
import { buildDistanceModel, mahalanobisDistance, symmetricEigen } from '../../server/spectra/nir';
import { checkQuality } from '../../server/spectra/quality';
import { prepareReference, scoreAgainst } from '../../server/spectra/score';
import { specificityMatrix } from '../../server/spectra/specificity';
import { gaussian, listSet, loadReference, seededRandom, stem } from './spectra-analysis-data';

const N = defaultNirMethod;

describe('PCA and Mahalanobis distance', () => {
  it('symmetric eigen-decomposition: eigenvalues of [[2,1],[1,2]] are 3 and 1; A v = lambda v for a 4 x 4 matrix', () => {
    expect(Array.from(symmetricEigen(Float64Array.from([2, 1, 1, 2]), 2).values).map((v) => +v.toFixed(12))).toEqual([
      3, 1,
    ]);
    const a = [4, 1, 0.5, 0, 1, 3, 0.2, 0.1, 0.5, 0.2, 2, 0.3, 0, 0.1, 0.3, 1];
    const { values, vectors } = symmetricEigen(Float64Array.from(a), 4);
    vectors.forEach((v, k) => {
      for (let i = 0; i < 4; i++) {
        let s = 0;
        for (let j = 0; j < 4; j++) s += a[i * 4 + j] * v[j];
        expect(s).toBeCloseTo(values[k] * v[i], 10);
      }
    });
  });

  it('with all components kept, equals sqrt(d S^-1 d / K) computed directly with mathjs', () => {
    const g = gaussian(seededRandom(17));
    const pts = Array.from({ length: 40 }, () => {
      const u = g();
      const v = g();
      return Float64Array.from([2 * u + 1, 0.5 * u + 0.3 * v - 2, 0.2 * v + 0.1 * g()]);
    });
    const model = buildDistanceModel(pts, 3);
    const mean = [0, 1, 2].map((j) => pts.reduce((s, p) => s + p[j], 0) / pts.length);
    const cov = [0, 1, 2].map((i) =>
      [0, 1, 2].map((j) => pts.reduce((s, p) => s + (p[i] - mean[i]) * (p[j] - mean[j]), 0) / (pts.length - 1)),
    );
    const sInv = inv(cov) as number[][];
    for (const x of [
      [1, -2, 0],
      [3, -1, 0.5],
      [-2, -3, -0.4],
    ]) {
      const d = x.map((v, j) => v - mean[j]);
      const d2 = multiply(multiply(d, sInv), d) as unknown as number;
      expect(mahalanobisDistance(model, Float64Array.from(x))).toBeCloseTo(Math.sqrt(d2 / 3), 8);
    }
  });
});

describe('NIR identity on the polyolefin pellets', () => {
  const files = listSet('nir-polyolefins');
  const sampleOf = (f: string) => stem(f).replace(/_r\d$/, '');
  const polymer = (f: string) => (f.includes('/PP_') ? 'PP' : 'PE');
  const refs = new Map(
    files.map((f) => [f, prepareReference({ id: stem(f), materialId: sampleOf(f), spectrum: loadReference(f) }, N)]),
  );
  const setOf = (sample: string, except?: string) =>
    files.filter((f) => sampleOf(f) === sample && f !== except).map((f) => refs.get(f)!);
  const samples = [...new Set(files.map(sampleOf))];

  it('all 35 spectra pass the quality gate of the NIR method (replicate 7 stops at 9999 cm-1, still covering 4200-9000)', () => {
    expect(files).toHaveLength(35);
    for (const f of files) expect(checkQuality(loadReference(f), N).ok, f).toBe(true);
  });

  it('each replicate passes against the other six of its sample, distance and residual included, except HDPE replicate 7 on the residual', () => {
    // Engine 2.0.0 adds the residual (Q) to the default NIR method. Replicate 7 of every sample was recorded to
    // 9999 cm-1 only (README of the data), apparently another session; for the HDPE pellets its residual outside
    // the model of replicates 1-6 is 3.0 times the limit those six give (spread over 6000-9000 cm-1), while its
    // Mahalanobis distance in the model plane is 0.7. A reference set of one session is narrower than a second one.
    for (const f of files) {
      const r = scoreAgainst(loadReference(f), setOf(sampleOf(f), f), N);
      expect(r.distance?.references).toBe(6);
      expect(r.criteria.map((c) => c.key)).toEqual(['correlation', 'mahalanobis', 'residual']);
      if (stem(f) === 'HDPE_NIST-SRM1474_N1474PE_r7') {
        expect(r.criteria.filter((c) => c.verdict === 'fail').map((c) => c.key)).toEqual(['residual']);
        expect(r.distance!.residual!.ratio).toBeGreaterThan(2.5);
        expect(r.distance!.residual!.ratio).toBeLessThan(3.5);
        continue;
      }
      expect(r.verdict, `${stem(f)}: ${r.explanation.join(' ')}`).toBe('pass');
      expect(r.distance!.residual!.ratio).toBeLessThan(1);
    }
  });

  it('polyethylene and polypropylene fail against each other', () => {
    for (const f of files) {
      for (const s of samples.filter((s) => polymer(`/${s}`) !== polymer(f))) {
        const r = scoreAgainst(loadReference(f), setOf(s), N);
        expect(r.verdict).toBe('fail');
        expect(r.criteria[0].value).toBeLessThan(0.7);
      }
    }
  });

  it('the two polypropylenes (two sources, one polymer) fail only on the set criteria, every one on the residual', () => {
    // Report: a model of 7 pellets from one source is narrower than the difference between sources; an NIR
    // reference set should hold several lots (Ph. Eur. 2.2.40, from memory). Engine 1.0.0 (distance only)
    // failed 3 of the 7; with the residual all 7 fail (1.4 to 3.6 times the limit), none on correlation.
    let failing = 0;
    for (const f of files.filter((f) => sampleOf(f) === 'PP_supplier1_S0011PP')) {
      const r = scoreAgainst(loadReference(f), setOf('PP_HPU-kit_H0009PP'), N);
      if (r.verdict === 'fail') {
        failing++;
        const keys = r.criteria.filter((c) => c.verdict === 'fail').map((c) => c.key);
        expect(keys).toContain('residual');
        expect(keys.every((k) => k === 'mahalanobis' || k === 'residual')).toBe(true);
      }
    }
    expect(failing).toBe(7);
  });

  it('HDPE / LDPE / LLDPE (near neighbours) either fail or are reported as not discriminated', () => {
    const report = specificityMatrix(buildLibrary([...refs.values()], N));
    const pe = samples.filter((s) => !s.startsWith('PP'));
    for (const a of pe) {
      for (const b of pe) {
        if (a === b) continue;
        const p = report.pairs.find((x) => x.materialId === a && x.challengerMaterialId === b)!;
        const direct = files
          .filter((f) => sampleOf(f) === b)
          .some((f) => scoreAgainst(loadReference(f), setOf(a), N).verdict === 'pass');
        expect(p.discriminated).toBe(!direct);
        const listed = report.notDiscriminated.some((x) => x.includes(a) && x.includes(b));
        if (direct) expect(listed).toBe(true);
      }
    }
    // What the default NIR method achieves: engine 1.0.0 (distance only) told HDPE from LLDPE and left HDPE / LDPE,
    // LDPE / LLDPE and the two polypropylenes not discriminated. With the residual every pair is told apart; LDPE's
    // set tells HDPE pellets apart by the residual alone (distance 0.6, residual 18 times the limit), and the two
    // polypropylene sources are told apart by it too (the single-lot caveat above).
    expect(report.notDiscriminated).toEqual([]);
    const pair = (a: string, b: string) =>
      report.pairs.find((x) => x.materialId === a && x.challengerMaterialId === b)!;
    const hl = pair('HDPE_NIST-SRM1474_N1474PE', 'LLDPE_HPU-kit_H0004LLDPE');
    expect(hl.correlationMargin).toBeLessThan(0);
    expect(hl.minDistance as number).toBeGreaterThan(3);
    const lh = pair('LDPE_NIST-SRM1476_N1476LDPE', 'HDPE_NIST-SRM1474_N1474PE');
    expect(lh.correlationMargin).toBeLessThan(0);
    expect(lh.minDistance as number).toBeLessThan(3);
    expect(lh.minResidualRatio as number).toBeGreaterThan(10);
    const pp = pair('PP_supplier1_S0011PP', 'PP_HPU-kit_H0009PP');
    expect(pp.minDistance as number).toBeLessThan(3);
    expect(pp.minResidualRatio as number).toBeGreaterThan(1);
    console.info(
      `NIR: smallest correlation margin ${report.minMargin?.value.toFixed(4)} (${report.minMargin?.materialId} vs ${report.minMargin?.challengerMaterialId})`,
    );
  });
});
