/**
 * Specificity challenge (ICH Q2(R2) specificity for identity tests; ../shared/domain-facts.md 2-3):
 * synthetic cases, the near-neighbour fibres of ../shared/reference-data/atr-ftir-fibres (reference-data
 * README: cotton/linen and lyocell/rayon are cellulose I / II pairs, nylon 6 / 6,6 are close) and the
 * sixteen oils of ftir-oils/ (ChemoSpec SrE.IR: saw palmetto extracts, evening primrose and olive oil).
 */
import { describe, expect, it } from 'vitest';
import { buildLibrary } from '../../server/spectra/library';
import { defaultMidIrAtrMethod } from '../../server/spectra/method';
import { prepareReference, scoreAgainst } from '../../server/spectra/score';
import { specificityMatrix } from '../../server/spectra/specificity';
import {
  ESTER_BANDS,
  gaussian,
  listSet,
  loadReference,
  seededRandom,
  stem,
  syntheticSpectrum,
} from './spectra-analysis-data';

const M = defaultMidIrAtrMethod;

describe('specificity matrix: synthetic', () => {
  const g = gaussian(seededRandom(8));
  const noisy = (bands = ESTER_BANDS) => {
    const s = syntheticSpectrum(bands);
    return { ...s, y: s.y.map((v) => v + 0.0003 * g()) };
  };
  const ketone = ESTER_BANDS.map((b) => (b.at === 1740 ? { ...b, at: 1715 } : b));

  it('two names for the same compound are not discriminated; a different compound is', () => {
    const lib = buildLibrary(
      [
        { id: 'a1', materialId: 'A', spectrum: noisy() },
        { id: 'a2', materialId: 'A', spectrum: noisy() },
        { id: 'b1', materialId: 'B', spectrum: noisy() },
        { id: 'k1', materialId: 'K', spectrum: noisy(ketone) },
      ],
      M,
    );
    const r = specificityMatrix(lib, M);
    expect(r.notDiscriminated).toEqual([['A', 'B']]);
    expect(r.allDiscriminated).toBe(false);
    const ab = r.pairs.find((p) => p.materialId === 'A' && p.challengerMaterialId === 'B');
    expect(ab?.passing).toEqual(['b1']);
    expect(ab?.correlationMargin).toBeLessThan(0);
    const ak = r.pairs.find((p) => p.materialId === 'A' && p.challengerMaterialId === 'K');
    expect(ak?.discriminated).toBe(true);
    expect(r.materials.find((m) => m.materialId === 'A')?.lowestWithinCorrelation).toBeGreaterThan(0.99);
    expect(r.engineVersion).toMatch(/^\d+\.\d+\.\d+$/);
  });

  it('agrees with scoreAgainst for every pair', () => {
    const entries = [
      { id: 'a1', materialId: 'A', spectrum: noisy() },
      { id: 'k1', materialId: 'K', spectrum: noisy(ketone) },
      { id: 'k2', materialId: 'K', spectrum: noisy(ketone) },
    ];
    const r = specificityMatrix(buildLibrary(entries, M));
    for (const p of r.pairs) {
      for (const c of entries.filter((e) => e.materialId === p.challengerMaterialId)) {
        const refs = entries.filter((e) => e.materialId === p.materialId).map((e) => prepareReference(e, M));
        const v = scoreAgainst(c.spectrum, refs, M).verdict;
        expect(p.passing.includes(c.id)).toBe(v === 'pass');
      }
    }
  });
});

describe('specificity matrix: real spectra', () => {
  const material = (f: string) =>
    stem(f)
      .replace(/^cellulose_/, 'cellulose-')
      .split('_')[0];
  // Approved references: every valid fibre scan except the cotton-cord mix-up (spectrally polyester)
  // and the acrylic scan too weak to judge.
  const fibres = listSet('atr-ftir-fibres').filter((f) => !/cotton_cord_s6\.1_r1|s017_r1/.test(f));
  const fibreReport = specificityMatrix(
    buildLibrary(
      fibres.map((f) => ({ id: stem(f), materialId: material(f), spectrum: loadReference(f) })),
      M,
    ),
  );
  const pair = (a: string, b: string) =>
    fibreReport.pairs.filter(
      (p) =>
        (p.materialId === a && p.challengerMaterialId === b) || (p.materialId === b && p.challengerMaterialId === a),
    );
  const listed = (a: string, b: string) =>
    fibreReport.notDiscriminated.some(([x, y]) => (x === a && y === b) || (x === b && y === a));

  it('near neighbours either fail each other or are reported as not discriminated', () => {
    const NEIGHBOURS: Array<[string, string]> = [
      ['cotton', 'linen'],
      ['lyocell', 'rayon-viscose'],
      ['cotton', 'lyocell'],
      ['cotton', 'rayon-viscose'],
      ['linen', 'lyocell'],
      ['linen', 'rayon-viscose'],
      ['nylon6', 'nylon66'],
      ['silk', 'wool'],
      ['cellulose-diacetate', 'cellulose-triacetate'],
    ];
    for (const [a, b] of NEIGHBOURS) {
      const ps = pair(a, b);
      expect(ps).toHaveLength(2);
      const anyPass = ps.some((p) => p.passing.length > 0);
      expect(listed(a, b)).toBe(anyPass);
    }
    // What the default method achieves (report): cellulose I vs II, nylon 6 vs 6,6 and silk vs wool are told
    // apart by the first-derivative correlation; cotton/linen, lyocell/rayon and di-/triacetate are not.
    expect(fibreReport.notDiscriminated.map((p) => [...p].sort().join(' / ')).sort()).toEqual([
      'cellulose-diacetate / cellulose-triacetate',
      'cotton / linen',
      'lyocell / rayon-viscose',
    ]);
    for (const [a, b] of [
      ['nylon6', 'nylon66'],
      ['silk', 'wool'],
      ['cotton', 'lyocell'],
    ]) {
      for (const p of pair(a, b)) {
        expect(p.correlationMargin).toBeLessThan(0.05);
        expect(p.derivativeMargin as number).toBeGreaterThan(0);
      }
    }
  });

  it('reports the smallest margins', () => {
    const min = fibreReport.minMargin;
    expect(min).not.toBeNull();
    expect(min?.value).toBeLessThan(0);
    const discriminated = fibreReport.pairs.filter((p) => p.discriminated && p.derivativeMargin !== null);
    const tightest = discriminated.reduce((a, b) =>
      (a.derivativeMargin as number) < (b.derivativeMargin as number) ? a : b,
    );
    // Printed for the validation report (smallest margins seen with the default method).
    console.info(
      `fibres: smallest correlation margin ${min?.value.toFixed(4)} (${min?.materialId} vs ${min?.challengerMaterialId}); ` +
        `tightest discriminated pair ${tightest.materialId} vs ${tightest.challengerMaterialId}: derivative margin ` +
        `${(tightest.derivativeMargin as number).toFixed(4)}; lowest true-match correlations: ` +
        fibreReport.materials
          .filter((m) => m.lowestWithinCorrelation !== null)
          .map((m) => `${m.materialId} ${m.lowestWithinCorrelation?.toFixed(4)}`)
          .join(', '),
    );
    expect(tightest.derivativeMargin as number).toBeGreaterThan(0);
    expect(tightest.derivativeMargin as number).toBeLessThan(0.05);
  });

  it('the sixteen oils of ftir-oils/ are reported as NOT discriminated', () => {
    const oils = listSet('ftir-oils');
    expect(oils).toHaveLength(16);
    const r = specificityMatrix(
      buildLibrary(
        oils.map((f) => ({ id: stem(f), materialId: stem(f), spectrum: loadReference(f) })),
        M,
      ),
    );
    expect(r.allDiscriminated).toBe(false);
    const inPairs = new Set(r.notDiscriminated.flat());
    expect(inPairs.size).toBe(16);
    // Evening primrose oil and olive oil pass as each other.
    expect(r.notDiscriminated.some((p) => p.includes('SV_EPO') && p.includes('TJ_OO'))).toBe(true);
    expect(r.minMargin?.value).toBeLessThan(-0.04);
    console.info(
      `oils: ${r.notDiscriminated.length} of 120 pairs not discriminated; smallest margin ${r.minMargin?.value.toFixed(4)}`,
    );
  });
});
