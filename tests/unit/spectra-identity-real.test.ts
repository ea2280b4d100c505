/**
 * Identity decisions on real spectra (../shared/reference-data, see its README):
 * ATR-FTIR fibres (repeat scans, several lots per material; Parkar et al. 2025,
 * doi:10.17632/rx3fjgz96x.1), the NRCan ATR set (solvents, polystyrene, paper) and
 * SBO.jdx, all under the default mid-IR ATR method, which is not loosened here.
 */
import { describe, expect, it } from 'vitest';
import { buildLibrary, searchLibrary } from '../../server/spectra/library';
import { defaultMidIrAtrMethod } from '../../server/spectra/method';
import { checkQuality } from '../../server/spectra/quality';
import { type PreparedReference, prepareReference, scoreAgainst } from '../../server/spectra/score';
import type { Spectrum } from '../../server/spectra/types';
import { gaussian, listSet, loadReference, seededRandom, stem } from './spectra-analysis-data';

const M = defaultMidIrAtrMethod;
const FIBRES = listSet('atr-ftir-fibres');
const ATR = listSet('atr-ftir');
const SBO = 'jcamp/SBO.jdx';
/** The mix-up: labelled cotton, spectrally polyester (reference-data README). */
const MIXUP = 'atr-ftir-fibres/cotton_cord_s6.1_r1.csv';
/** The scan too weak to judge (strongest band 0.007 absorbance). */
const WEAK = 'atr-ftir-fibres/acrylic_PAN-MMA-MA_s017_r1.csv';

/** Material of a file: the file-name prefix (fibres) or the name (other sets). */
function material(f: string): string {
  if (f === SBO) return 'SBO';
  return stem(f)
    .replace(/^cellulose_/, 'cellulose-')
    .split('_')[0];
}
/** Physical sample: the file name without its repeat-scan suffix. */
const sampleOf = (f: string) => stem(f).replace(/_r\d$/, '');

/** Chemical family (reference-data README "Distinct materials"; textbook polymer chemistry). */
const FAMILY: Record<string, string> = {
  cotton: 'cellulose',
  linen: 'cellulose',
  lyocell: 'cellulose',
  'rayon-viscose': 'cellulose',
  white: 'cellulose',
  'cellulose-diacetate': 'cellulose acetate',
  'cellulose-triacetate': 'cellulose acetate',
  acrylic: 'polyacrylonitrile',
  modacrylic: 'polyacrylonitrile',
  'para-aramid': 'aramid',
  'meta-aramid': 'aramid',
  nylon6: 'polyamide',
  nylon66: 'polyamide',
  silk: 'protein',
  wool: 'protein',
  'polyester-PET': 'polyester',
  polypropylene: 'polypropylene',
  'polyethylene-HMPE': 'polyethylene',
  polystyrene: 'polystyrene',
  toluene: 'toluene',
  isopropanol: 'alcohol',
  heptanes: 'alkane',
  SBO: 'triglyceride',
};
const family = (f: string) => {
  const fam = FAMILY[material(f)];
  if (!fam) throw new Error(`no family for ${f}`);
  return fam;
};

const refCache = new Map<string, PreparedReference>();
function ref(f: string): PreparedReference {
  let r = refCache.get(f);
  if (!r) {
    r = prepareReference({ id: stem(f), materialId: material(f), spectrum: loadReference(f) }, M);
    refCache.set(f, r);
  }
  return r;
}
const verdict = (sample: string, refs: string[]) => scoreAgainst(loadReference(sample), refs.map(ref), M);

/** Every file that is a valid measurement under the default method. */
const VALID = [...ATR, ...FIBRES, SBO].filter((f) => checkQuality(loadReference(f), M).ok);

describe('identity on real ATR-FTIR spectra, default method', () => {
  it('the quality gate refuses only the 0.007-absorbance acrylic scan and the clipped toluene spectrum', () => {
    const refused = [...ATR, ...FIBRES, SBO].filter((f) => !VALID.includes(f));
    expect(refused.sort()).toEqual(['atr-ftir/toluene.csv', WEAK].sort());
    const r = verdict(WEAK, ['atr-ftir-fibres/acrylic_PAN-MMA-MA_s017_r2.csv']);
    expect(r.verdict).toBe('invalid');
    expect(r.quality.problems.map((p) => p.code)).toEqual(['TOO_WEAK']);
  });

  it('repeat scans of one sample pass against each other (except the too-weak scan, the cotton-cord mix-up and the wool amide II band)', () => {
    // Engine 2.0.0 widens the shift tolerance for broad bands only (FWHM >= 80 cm-1, bands.ts). The amide II
    // band of the Coopworth wool is 56-58 cm-1 wide, a sharp band, and its maximum sits at 1528.7 cm-1 in r1
    // and 1517.9 cm-1 in r2: 10.8 cm-1 apart, beyond the +-7.6 cm-1 of 0.5 % of the position. Engine 1.0.0
    // passed the pair because a quarter of the width (14 cm-1) was allowed for every band.
    const SHARP_BAND_SHIFT = new Set([
      'wool_Coopworth_s11.3_r1 > wool_Coopworth_s11.3_r2',
      'wool_Coopworth_s11.3_r2 > wool_Coopworth_s11.3_r1',
    ]);
    const groups = new Map<string, string[]>();
    for (const f of FIBRES.filter((f) => /_r\d\.csv$/.test(f) && f !== WEAK && f !== MIXUP)) {
      groups.set(sampleOf(f), [...(groups.get(sampleOf(f)) ?? []), f]);
    }
    let pairs = 0;
    for (const [, files] of groups) {
      for (const a of files) {
        for (const b of files) {
          if (a === b) continue;
          const r = verdict(a, [b]);
          pairs++;
          if (SHARP_BAND_SHIFT.has(`${stem(a)} > ${stem(b)}`)) {
            expect(r.verdict).toBe('fail');
            expect(r.criteria.filter((c) => c.verdict === 'fail').map((c) => c.key)).toContain('band-concordance');
            const row = r.bands.find((x) => !x.withinTolerance)!;
            expect(row.referenceBand).toBeGreaterThan(1510);
            expect(row.referenceBand).toBeLessThan(1535);
            expect(row.referenceWidth!).toBeLessThan(80);
            expect(Math.abs(row.shift!)).toBeCloseTo(10.8, 1);
            expect(row.widened).toBe(false);
            continue;
          }
          expect(r.verdict, `${stem(a)} against ${stem(b)}: ${r.explanation.join(' ')}`).toBe('pass');
        }
      }
    }
    expect(pairs).toBe(26);
  });

  it('other lots of the same material: the lots that do not pass are exactly the ones listed with their reasons', () => {
    // Observed with the default method, reported, never forced to pass. Reasons (from the explanations):
    //  - acrylic: PAN/MA and PAN/MMA/MA are different copolymers; even the two PAN/MA lots differ (extra
    //    C-O band near 1041 cm-1, correlation 0.945);
    //  - linen: the shoemaker's thread carries wax (extra CH2 bands at 1462/2850/2920 cm-1);
    //  - para-aramid: two commercial products (correlation 0.83);
    //  - polyester-PET: lot s135 differs from s141/s144 (band near 723 cm-1 shifted by 4 cm-1, extra bands
    //    near 957 cm-1, band near 1340 cm-1 missing: a different crystallinity or product);
    //  - wool: the Lincoln sample carries extra CH2 bands (grease) and differs from the others; the Coopworth and
    //    worsted samples differ in the amide II maximum and a band near 1043 cm-1 (sharp bands, 57 and 75 cm-1
    //    wide, whose tolerance engine 1.0.0 widened to a quarter of the width; since 2.0.0 only broad bands are);
    //  - polypropylene: s125 against s123 only: its band near 1167 cm-1 is not found within tolerance.
    const EXPECTED_FAILING = new Set([
      'acrylic_PAN-MA_s005 > acrylic_PAN-MA_s010',
      'acrylic_PAN-MA_s005 > acrylic_PAN-MMA-MA_s017',
      'acrylic_PAN-MA_s010 > acrylic_PAN-MA_s005',
      'acrylic_PAN-MA_s010 > acrylic_PAN-MMA-MA_s017',
      'acrylic_PAN-MMA-MA_s017 > acrylic_PAN-MA_s005',
      'acrylic_PAN-MMA-MA_s017 > acrylic_PAN-MA_s010',
      'linen_hand-spun-thread_s4.2 > linen_shoemakers-thread_s4.3',
      'linen_shoemakers-thread_s4.3 > linen_hand-spun-thread_s4.2',
      'para-aramid_s049 > para-aramid_s050',
      'para-aramid_s050 > para-aramid_s049',
      'polyester-PET_s135 > polyester-PET_s141',
      'polyester-PET_s135 > polyester-PET_s144',
      'polyester-PET_s141 > polyester-PET_s135',
      'polyester-PET_s144 > polyester-PET_s135',
      'wool_Coopworth_s11.3 > wool_Lincoln_s12.3',
      'wool_Coopworth_s11.3 > wool_worsted-white_s0',
      'wool_Lincoln_s12.3 > wool_Coopworth_s11.3',
      'wool_Lincoln_s12.3 > wool_worsted-white_s0',
      'wool_worsted-white_s0 > wool_Coopworth_s11.3',
      'wool_worsted-white_s0 > wool_Lincoln_s12.3',
      'polypropylene_s125 > polypropylene_s123',
    ]);
    const files = FIBRES.filter((f) => f !== WEAK && f !== MIXUP);
    const failing = new Set<string>();
    let compared = 0;
    for (const a of files) {
      for (const b of files) {
        if (material(a) !== material(b) || sampleOf(a) === sampleOf(b)) continue;
        // The sample (each scan of lot A) against the reference set of lot B (all its scans).
        const lotB = files.filter((f) => sampleOf(f) === sampleOf(b));
        if (b !== lotB[0]) continue;
        compared++;
        const r = verdict(a, lotB);
        expect(r.verdict).not.toBe('invalid');
        if (r.verdict === 'fail') {
          failing.add(`${sampleOf(a)} > ${sampleOf(b)}`);
          expect(r.explanation.length).toBeGreaterThan(1);
        }
      }
    }
    expect(compared).toBeGreaterThan(60);
    expect([...failing].sort()).toEqual([...EXPECTED_FAILING].sort());
  });

  it('materials of different chemistry fail against each other', () => {
    const files = VALID.filter((f) => f !== MIXUP);
    let compared = 0;
    for (const a of files) {
      // One call against all references of other families: a pass would need one of them to pass every criterion.
      const others = files.filter((b) => family(b) !== family(a));
      const r = verdict(a, others);
      const passed = r.references.filter((s) => s.verdict === 'pass').map((s) => s.referenceId);
      expect(passed, `${stem(a)} passed as ${passed.join(', ')}`).toEqual([]);
      expect(r.verdict).toBe('fail');
      compared += others.length;
    }
    expect(compared).toBeGreaterThan(2500);
  });

  it('the mix-up cotton_cord_s6.1_r1 fails as cotton and library search names polyester first', () => {
    const cottonRefs = FIBRES.filter((f) => material(f) === 'cotton' && f !== MIXUP);
    const r = verdict(MIXUP, cottonRefs);
    expect(r.verdict).toBe('fail');
    // Its own repeat scan (r2) is cotton, and it fails against that too.
    expect(r.references.find((s) => s.referenceId === 'cotton_cord_s6.1_r2')?.verdict).toBe('fail');
    expect(r.explanation.join(' ')).toMatch(/Extra sharp band at 17\d\d\.\d cm-1/); // the polyester carbonyl
    const library = buildLibrary(
      VALID.filter((f) => f !== MIXUP).map((f) => ({
        id: stem(f),
        materialId: material(f),
        spectrum: loadReference(f),
      })),
      M,
    );
    const hits = searchLibrary(library, loadReference(MIXUP), 5);
    expect(hits[0].materialId).toBe('polyester-PET');
    expect(hits.slice(0, 3).every((h) => h.materialId === 'polyester-PET')).toBe(true);
  });

  it('realistic perturbations of each spectrum pass against the spectrum itself', () => {
    const g = gaussian(seededRandom(2024));
    for (const f of VALID) {
      const s = loadReference(f);
      const h = checkQuality(s, M).metrics.bandHeight;
      const perturbed: Record<string, Spectrum> = {
        // White noise with a standard deviation of 0.2 % of the band height (signal-to-noise 500).
        noise: { ...s, y: s.y.map((v) => v + 0.002 * h * g()) },
        // Baseline tilt rising by 10 % of the band height across the range.
        tilt: { ...s, y: s.y.map((v, i) => v + 0.1 * h * ((s.x[i] - s.x[0]) / (s.x[s.x.length - 1] - s.x[0]))) },
        // Wavenumber shift of +-1 cm-1 (the Ph. Eur. FT tolerance of the instrument check).
        shiftUp: { ...s, x: s.x.map((v, i) => (i === 0 ? v : v + 1)) },
        shiftDown: { ...s, x: s.x.map((v, i) => (i === s.x.length - 1 ? v : v - 1)) },
        // Contact pressure: intensities scaled by 0.6 and 1.5.
        weaker: { ...s, y: s.y.map((v) => v * 0.6) },
        stronger: { ...s, y: s.y.map((v) => v * 1.5) },
      };
      for (const [kind, p] of Object.entries(perturbed)) {
        const r = scoreAgainst(p, [ref(f)], M);
        const tooWeak = kind === 'weaker' && checkQuality(p, M).problems.some((q) => q.code === 'TOO_WEAK');
        if (tooWeak) {
          // Scaled below the quality limit: refused as a measurement, never failed.
          expect(r.verdict).toBe('invalid');
          continue;
        }
        expect(r.verdict, `${stem(f)} ${kind}: ${r.explanation.join(' ')}`).toBe('pass');
      }
    }
  });

  it('SBO.jdx (read from JCAMP-DX transmittance) is a valid measurement, fails against other chemistry, and passes as olive oil', () => {
    const sbo = loadReference(SBO);
    expect(sbo.meta.format).toBe('jcamp-dx');
    expect(checkQuality(sbo, M).ok).toBe(true);
    for (const f of [
      'atr-ftir/heptanes.csv',
      'atr-ftir/isopropanol.csv',
      'atr-ftir/polystyrene_film.csv',
      'atr-ftir/white_paper.csv',
      'atr-ftir-fibres/polyester-PET_s144.csv',
    ]) {
      expect(verdict(SBO, [f]).verdict).toBe('fail');
    }
    // A spread made from vegetable oil against olive oil: mid-IR barely tells triglyceride oils apart,
    // the case the specificity gate exists for (see spectra-specificity.test.ts).
    const olive = verdict(SBO, ['ftir-oils/TJ_OO.csv']);
    expect(olive.verdict).toBe('pass');
    expect(olive.criteria[0].value).toBeGreaterThan(0.99);
  });
});
