import { describe, expect, it } from 'vitest';
import {
  bandConcordance,
  bandToleranceFor,
  bandToleranceRule,
  type ConcordanceSettings,
  referenceBandsFrom,
} from '../../server/spectra/bands';
import { BROAD_BAND_WIDTH } from '../../server/spectra/group-frequencies';
import { defaultMidIrAtrMethod } from '../../server/spectra/method';
import type { Peak } from '../../server/spectra/peaks';
import { scoreAgainst } from '../../server/spectra/score';
import { ESTER_BANDS, syntheticSpectrum } from './spectra-analysis-data';

const peak = (position: number, prominence = 0.5, width = 15): Peak => ({
  position,
  index: 0,
  height: prominence,
  prominence,
  width,
});
const settings: ConcordanceSettings = {
  bandTolerance: { mode: 'relative', percent: 0.5 },
  widthTolerance: 0.25,
  maxExtraBandProminence: 0.2,
};

describe('band concordance', () => {
  it('tolerance: 0.5 % of the position, or a quarter of the width for broad bands', () => {
    expect(bandToleranceFor(1000, 15, settings)).toBeCloseTo(5, 12);
    expect(bandToleranceFor(3330, 260, settings)).toBeCloseTo(65, 12);
    expect(bandToleranceFor(3330, 260, { ...settings, widthTolerance: null })).toBeCloseTo(16.65, 12);
    expect(bandToleranceFor(1600, undefined, { ...settings, bandTolerance: { mode: 'absolute', cm1: 4 } })).toBe(4);
  });

  it('a sharp band is never widened: below BROAD_BAND_WIDTH (80 cm-1) only the positional tolerance applies', () => {
    // 0.5 % of 1000 cm-1 = 5 cm-1 (Ph. Eur. 2.2.24 read as 0.5 % of the position, ../shared/domain-facts.md 1.1).
    expect(BROAD_BAND_WIDTH).toBe(80);
    for (const width of [5, 15, 40, 79.9, undefined]) {
      const rule = bandToleranceRule(1000, width, settings);
      expect(rule.tolerance).toBeCloseTo(5, 12);
      expect(rule.widened).toBe(false);
      expect(rule.rule).toBe('0.5 % of the position');
    }
    // From 80 cm-1 on the band is broad: a quarter of its width, 20 cm-1, beats the positional 5 cm-1.
    const broad = bandToleranceRule(1000, 80, settings);
    expect(broad).toMatchObject({ tolerance: 20, positionTolerance: 5, widened: true });
    expect(broad.rule).toBe(
      'widened for a broad band, FWHM 80 cm-1 (0.25 x FWHM; 0.5 % of the position would allow 5.0 cm-1)',
    );
    // A broad band whose width allows less than the positional tolerance keeps the positional tolerance.
    expect(bandToleranceRule(3000, 100, { ...settings, bandTolerance: { mode: 'absolute', cm1: 30 } })).toMatchObject({
      tolerance: 30,
      widened: false,
    });
    expect(bandToleranceRule(1600, 200, { ...settings, bandTolerance: { mode: 'absolute', cm1: 4 } }).rule).toMatch(
      /^widened for a broad band, FWHM 200 cm-1 \(0\.25 x FWHM; 4 cm-1 at every position would allow 4\.0 cm-1\)$/,
    );
  });

  it('a sharp band shifted beyond its positional tolerance fails, whatever its width below 80 cm-1', () => {
    for (const width of [12, 40, 60, 79]) {
      const ref = [peak(1000, 0.5, width)];
      // 7 cm-1 is beyond +-5 cm-1; the old width rule (a quarter of the width) would have allowed up to 19.75 cm-1.
      const c = bandConcordance(referenceBandsFrom(ref, 0.1), ref, [peak(1007, 0.5, width)], settings);
      expect(c.rows[0]).toMatchObject({
        sampleBand: 1007,
        withinTolerance: false,
        widened: false,
        referenceWidth: width,
      });
      expect(c.rows[0].tolerance).toBeCloseTo(5, 12);
      expect(c.matched).toBe(0);
    }
    // The same shift on a broad band (FWHM 100 cm-1: +-25 cm-1) passes and says why.
    const broadRef = [peak(1000, 0.5, 100)];
    const ok = bandConcordance(referenceBandsFrom(broadRef, 0.1), broadRef, [peak(1007, 0.5, 100)], settings);
    expect(ok.rows[0]).toMatchObject({ withinTolerance: true, widened: true, tolerance: 25 });
    expect(ok.rows[0].toleranceRule).toMatch(/^widened for a broad band, FWHM 100 cm-1/);
  });

  it('scoring: a sharp ester band moved 8.5 cm-1 (beyond +-6.2 cm-1 at 1240 cm-1) fails band concordance', () => {
    // ESTER_BANDS: the C-O stretch at 1240 cm-1 is 40 cm-1 wide, a sharp band; a quarter of its width would be 10 cm-1.
    const ref = syntheticSpectrum(ESTER_BANDS);
    const moved = syntheticSpectrum(ESTER_BANDS.map((b) => (b.at === 1240 ? { ...b, at: 1248.5 } : b)));
    const r = scoreAgainst(moved, [{ id: 'ester', spectrum: ref }], defaultMidIrAtrMethod);
    const row = r.bands.find((b) => Math.abs(b.referenceBand - 1240) < 2)!;
    expect(row.withinTolerance).toBe(false);
    expect(row.widened).toBe(false);
    expect(row.tolerance).toBeCloseTo(6.2, 1);
    expect(row.shift!).toBeGreaterThan(8);
    expect(r.criteria.find((c) => c.key === 'band-concordance')?.verdict).toBe('fail');
    expect(r.verdict).toBe('fail');
    expect(r.explanation.join(' ')).toMatch(/at most ±6\.2 cm-1 is allowed \(0\.5 % of the position\)/);
  });

  it('matches each reference band to a sample band within tolerance and reports the shift', () => {
    const ref = [peak(1000), peak(1600), peak(2920)];
    const sample = [peak(1001.2), peak(1597.5), peak(2930)];
    const c = bandConcordance(referenceBandsFrom(ref, 0.1), ref, sample, settings);
    expect(c.matched).toBe(3);
    expect(c.rows.map((r) => Number(r.shift?.toFixed(1)))).toEqual([1.2, -2.5, 10]);
    expect(c.rows.every((r) => r.withinTolerance)).toBe(true);
    expect(c.extraBands).toEqual([]);
  });

  it('reports a band beyond tolerance as shifted, and a band with nothing nearby as missing', () => {
    const ref = [peak(1000), peak(1740)];
    const sample = [peak(1007)];
    const c = bandConcordance(referenceBandsFrom(ref, 0.1), ref, sample, settings);
    expect(c.matched).toBe(0);
    expect(c.rows[0]).toMatchObject({ referenceBand: 1000, sampleBand: 1007, withinTolerance: false });
    expect(c.rows[0].shift).toBeCloseTo(7, 12);
    expect(c.rows[1]).toMatchObject({ referenceBand: 1740, sampleBand: null, shift: null, withinTolerance: false });
    expect(c.rows[1].assignment).toMatch(/ester/);
  });

  it('matches one-to-one, nearest pairs first', () => {
    // Two reference bands 8 cm-1 apart; the sample shows only one of them.
    const ref = [peak(1600), peak(1608)];
    const sample = [peak(1607)];
    const c = bandConcordance(referenceBandsFrom(ref, 0.1), ref, sample, settings);
    expect(c.rows.find((r) => r.referenceBand === 1608)?.sampleBand).toBe(1607);
    expect(c.rows.find((r) => r.referenceBand === 1600)?.withinTolerance).toBe(false);
    expect(c.matched).toBe(1);
  });

  it('lists strong sample bands with no reference counterpart as extra, with their assignment', () => {
    const ref = [peak(1000), peak(2920)];
    const sample = [peak(1000), peak(2920), peak(3400, 0.4, 250), peak(1715, 0.1)];
    const c = bandConcordance(referenceBandsFrom(ref, 0.1), ref, sample, settings);
    expect(c.extraBands.map((e) => e.position)).toEqual([3400]); // 1715 is below maxExtraBandProminence
    expect(c.extraBands[0].assignment).toMatch(/hydrogen-bonded/);
  });

  it('a weak reference peak (below the reference-band level) still prevents an "extra" call', () => {
    const refPeaks = [peak(1000), peak(1715, 0.06)];
    const sample = [peak(1000), peak(1716, 0.5)];
    const c = bandConcordance(referenceBandsFrom(refPeaks, 0.1), refPeaks, sample, settings);
    expect(c.rows).toHaveLength(1);
    expect(c.extraBands).toEqual([]);
  });

  it('QA-listed reference bands keep their own assignment text', () => {
    const c = bandConcordance([{ position: 1650, assignment: 'amide I (QA)' }], [], [peak(1651)], settings);
    expect(c.rows[0].assignment).toBe('amide I (QA)');
    expect(c.matched).toBe(1);
  });
});
