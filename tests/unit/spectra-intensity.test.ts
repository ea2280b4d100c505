/**
 * Relative band intensity (Ph. Eur. 2.2.24: the maxima of sample and reference agree in position
 * and relative size; ../shared/domain-facts.md 1.1). The arithmetic is checked on hand-made traces;
 * the criterion on real spectra of ../shared/reference-data:
 *  - ftir-oils/ (ChemoSpec SrE.IR, bryanhanson/ChemoSpec: evening primrose oil SV_EPO, olive oil TJ_OO),
 *  - atr-ftir-fibres/ (repeat scans of one sample, Parkar et al. 2025, doi:10.17632/rx3fjgz96x.1),
 *  - jcamp/SBO.jdx (readJDX, a soybean-oil spread).
 */
import { describe, expect, it } from 'vitest';
import type { BandRow } from '../../server/spectra/bands';
import {
  compareIntensities,
  DEFAULT_RELATIVE_INTENSITY_TOLERANCE,
  traceAt,
  type Trace,
} from '../../server/spectra/intensity';
import { defaultMidIrAtrMethod, type IdentityMethod, validateMethod } from '../../server/spectra/method';
import { SUGGESTED_RELATIVE_INTENSITY_TOLERANCE } from '../../server/modules/library/contract';
import { scoreAgainst } from '../../server/spectra/score';
import { listSet, loadReference, stem } from './spectra-analysis-data';

const row = (referenceBand: number, sampleBand: number | null, withinTolerance = sampleBand !== null): BandRow => ({
  referenceBand,
  sampleBand,
  shift: sampleBand === null ? null : sampleBand - referenceBand,
  tolerance: 5,
  positionTolerance: 5,
  referenceWidth: 10,
  widened: false,
  toleranceRule: '0.5 % of the position',
  withinTolerance,
  assignment: '',
  referenceProminence: null,
  sampleProminence: null,
});

/** A trace on the grid 0..10 (step 1) with the given values. */
const trace = (values: number[]): Trace => ({
  grid: Float64Array.from(values, (_, i) => i),
  trace: Float64Array.from(values),
});

const WITH_INTENSITY: IdentityMethod = {
  ...structuredClone(defaultMidIrAtrMethod),
  relativeIntensityTolerance: DEFAULT_RELATIVE_INTENSITY_TOLERANCE,
};

describe('relative intensity: arithmetic', () => {
  it('heights are read off the trace by linear interpolation', () => {
    const t = trace([0, 1, 3, 2]);
    expect(traceAt(t, 1.5)).toBe(2);
    expect(traceAt(t, 2.25)).toBe(2.75);
    expect(traceAt(t, -1)).toBe(0);
    expect(traceAt(t, 9)).toBe(2);
  });

  it('each band is normalised to the strongest reference band and to its own match in the sample', () => {
    // Reference heights 0.2, 1.0 (strongest), 0.5 at x = 1, 5, 8. Sample heights 0.16, 0.8, 0.2 at x = 1, 5, 8:
    // relative 0.2 / 1.0 / 0.25 against 0.2 / 1.0 / 0.5.
    const ref = trace([0, 0.2, 0, 0, 0, 1.0, 0, 0, 0.5, 0, 0]);
    const smp = trace([0, 0.16, 0, 0, 0, 0.8, 0, 0, 0.2, 0, 0]);
    const c = compareIntensities([row(1, 1), row(5, 5), row(8, 8)], ref, smp, 0.15);
    expect(c.strongestBand).toBe(5);
    expect(c.anchorFound).toBe(true);
    expect(c.intensities.map((i) => i.reference)).toEqual([0.2, 1, 0.5]);
    [0.2, 1, 0.25].forEach((v, i) => expect(c.intensities[i].sample).toBeCloseTo(v, 12));
    expect(c.intensities[2].difference).toBeCloseTo(-0.25, 12);
    expect(c.intensities.map((i) => i.verdict)).toEqual(['pass', 'pass', 'fail']);
    expect(c.agreeing).toBe(2);
    // A tolerance of 0.25 admits the third band (|difference| <= tolerance).
    expect(compareIntensities([row(1, 1), row(5, 5), row(8, 8)], ref, smp, 0.25).agreeing).toBe(3);
  });

  it('a band not found within its positional tolerance is not compared; without the strongest band nothing is', () => {
    const ref = trace([0, 0.2, 0, 0, 0, 1.0, 0, 0, 0.5, 0, 0]);
    const smp = trace([0, 0.2, 0, 0, 0, 1.0, 0, 0, 0.5, 0, 0]);
    const missing = compareIntensities([row(1, 1), row(5, 5), row(8, null)], ref, smp, 0.15);
    expect(missing.intensities.map((i) => i.verdict)).toEqual(['pass', 'pass', 'not-compared']);
    expect(missing.agreeing).toBe(2);
    const shifted = compareIntensities([row(1, 1), row(5, 5), row(8, 9.5, false)], ref, smp, 0.15);
    expect(shifted.intensities[2]).toMatchObject({ sample: null, difference: null, verdict: 'not-compared' });
    const noAnchor = compareIntensities([row(1, 1), row(5, null), row(8, 8)], ref, smp, 0.15);
    expect(noAnchor.anchorFound).toBe(false);
    expect(noAnchor.agreeing).toBe(0);
    expect(noAnchor.intensities.every((i) => i.verdict === 'not-compared')).toBe(true);
  });

  it('the method field is optional (methods stored before engine 2.0.0), checked, and needs band picking', () => {
    expect(defaultMidIrAtrMethod.relativeIntensityTolerance ?? null).toBeNull();
    expect(SUGGESTED_RELATIVE_INTENSITY_TOLERANCE).toBe(DEFAULT_RELATIVE_INTENSITY_TOLERANCE);
    expect(validateMethod(WITH_INTENSITY)).toEqual([]);
    expect(validateMethod({ ...WITH_INTENSITY, relativeIntensityTolerance: 0 }).join(' ')).toMatch(
      /relativeIntensityTolerance must be a fraction/,
    );
    expect(validateMethod({ ...WITH_INTENSITY, peakProminence: null, maxExtraBandProminence: null }).join(' ')).toMatch(
      /relativeIntensityTolerance needs peakProminence/,
    );
    // Off: no criterion and no intensity column, as before.
    const r = scoreAgainst(
      loadReference('ftir-oils/TJ_OO.csv'),
      [{ id: 'OO', spectrum: loadReference('ftir-oils/TJ_OO.csv') }],
      defaultMidIrAtrMethod,
    );
    expect(r.criteria.map((c) => c.key)).not.toContain('relative-intensity');
    expect(r.bands.every((b) => b.intensity === undefined)).toBe(true);
  });
});

describe('relative intensity on real spectra', () => {
  const EPO = 'ftir-oils/SV_EPO.csv';
  const OO = 'ftir-oils/TJ_OO.csv';
  const ref = (f: string) => ({ id: stem(f), spectrum: loadReference(f) });

  it('evening primrose oil passes as olive oil on positions alone, and fails on relative intensity', () => {
    for (const [sample, reference] of [
      [EPO, OO],
      [OO, EPO],
    ]) {
      // Default method: correlation 0.984, every band within tolerance, no extra band: a pass.
      const positions = scoreAgainst(loadReference(sample), [ref(reference)], defaultMidIrAtrMethod);
      expect(positions.verdict).toBe('pass');
      const r = scoreAgainst(loadReference(sample), [ref(reference)], WITH_INTENSITY);
      expect(r.verdict).toBe('fail');
      expect(r.criteria.filter((c) => c.verdict === 'fail').map((c) => c.key)).toEqual(['relative-intensity']);
      // The C-H stretching bands (2922 and 2853 cm-1) are 0.16-0.21 of the strongest band (the ester C=O near
      // 1743 cm-1) weaker in evening primrose oil, which carries more unsaturated (fewer CH2) fatty acid chains.
      const ch = r.bands.find((b) => Math.abs(b.referenceBand - 2922) < 3)!;
      expect(ch.intensity?.verdict).toBe('fail');
      expect(Math.abs(ch.intensity!.difference!)).toBeGreaterThan(0.19);
      expect(Math.abs(ch.intensity!.difference!)).toBeLessThan(0.22);
      const carbonyl = r.bands.find((b) => Math.abs(b.referenceBand - 1743) < 3)!;
      expect(carbonyl.intensity).toMatchObject({ reference: 1, sample: 1, difference: 0, verdict: 'pass' });
      expect(r.explanation.join(' ')).toMatch(/Band at 292\d\.\d cm-1 has 0\.\d\d of the strongest band's height/);
    }
  });

  it('does not separate soybean oil (SBO.jdx) from olive oil: differences stay below 0.02', () => {
    // The criterion adds to the specificity check; it does not replace it (spectra-specificity.test.ts).
    const r = scoreAgainst(loadReference('jcamp/SBO.jdx'), [ref(OO)], WITH_INTENSITY);
    expect(r.verdict).toBe('pass');
    for (const b of r.bands) expect(Math.abs(b.intensity!.difference!)).toBeLessThan(0.02);
  });

  it('repeat scans of one sample agree within 0.15, except an oriented silk yarn (and a band already out of position)', () => {
    // Observed: silk yarn scan r2 swaps the heights of amide I (1620 cm-1) and amide II (1514 cm-1) against r1 and
    // r3 (0.17-0.18 of the strongest band); in an oriented fibre the two bands change with the fibre's direction on
    // the crystal (from memory: amide I/II dichroism of oriented silk). The Coopworth wool's amide II band is not
    // found within its positional tolerance (spectra-identity-real.test.ts), so it is not compared and does not agree.
    const EXPECTED_FAILING = new Set([
      'silk_Bombyx-mori-yarn_s16.3_r1 > silk_Bombyx-mori-yarn_s16.3_r2',
      'silk_Bombyx-mori-yarn_s16.3_r2 > silk_Bombyx-mori-yarn_s16.3_r1',
      'silk_Bombyx-mori-yarn_s16.3_r2 > silk_Bombyx-mori-yarn_s16.3_r3',
      'silk_Bombyx-mori-yarn_s16.3_r3 > silk_Bombyx-mori-yarn_s16.3_r2',
      'wool_Coopworth_s11.3_r1 > wool_Coopworth_s11.3_r2',
      'wool_Coopworth_s11.3_r2 > wool_Coopworth_s11.3_r1',
    ]);
    const files = listSet('atr-ftir-fibres').filter(
      // The 0.007-absorbance acrylic scan (refused as too weak) and the cotton-cord mix-up (spectrally polyester).
      (f) => /_r\d\.csv$/.test(f) && !f.includes('PAN-MMA-MA_s017_r1') && !f.includes('cotton_cord_s6.1_r1'),
    );
    const sampleOf = (f: string) => stem(f).replace(/_r\d$/, '');
    const failing: string[] = [];
    let pairs = 0;
    let largestPassing = 0;
    for (const a of files) {
      for (const b of files) {
        if (a === b || sampleOf(a) !== sampleOf(b)) continue;
        pairs++;
        const r = scoreAgainst(loadReference(a), [ref(b)], WITH_INTENSITY);
        const c = r.criteria.find((x) => x.key === 'relative-intensity')!;
        if (c.verdict === 'fail') failing.push(`${stem(a)} > ${stem(b)}`);
        else for (const row of r.bands) largestPassing = Math.max(largestPassing, Math.abs(row.intensity!.difference!));
        if (sampleOf(a).startsWith('silk') && c.verdict === 'fail') {
          const worst = Math.max(...r.bands.map((x) => Math.abs(x.intensity?.difference ?? 0)));
          expect(worst).toBeGreaterThan(0.15);
          expect(worst).toBeLessThan(0.19);
        }
      }
    }
    expect(pairs).toBe(26);
    expect(failing.sort()).toEqual([...EXPECTED_FAILING].sort());
    // Every other repeat pair stays within 0.14 of the strongest band (linen hand-spun thread: 0.138).
    expect(largestPassing).toBeLessThan(0.14);
  });

  it('heights, not prominences: the silk amide bands overlap, and their prominences differ by the whole scale', () => {
    const a = 'atr-ftir-fibres/silk_Bombyx-mori-yarn_s16.3_r1.csv';
    const b = 'atr-ftir-fibres/silk_Bombyx-mori-yarn_s16.3_r2.csv';
    const r = scoreAgainst(loadReference(a), [ref(b)], WITH_INTENSITY);
    const strongest = r.bands.reduce((m, x) => ((x.referenceProminence ?? 0) > (m.referenceProminence ?? 0) ? x : m));
    const byProminence = Math.max(
      ...r.bands.map((x) =>
        Math.abs(
          (x.sampleProminence ?? 0) / (strongest.sampleProminence ?? 1) -
            (x.referenceProminence ?? 0) / (strongest.referenceProminence ?? 1),
        ),
      ),
    );
    const byHeight = Math.max(...r.bands.map((x) => Math.abs(x.intensity!.difference!)));
    expect(byProminence).toBeGreaterThan(1);
    expect(byHeight).toBeLessThan(0.19);
  });
});
