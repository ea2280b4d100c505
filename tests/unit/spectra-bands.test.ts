import { describe, expect, it } from 'vitest';
import {
  bandConcordance,
  bandToleranceFor,
  type ConcordanceSettings,
  referenceBandsFrom,
} from '../../server/spectra/bands';
import type { Peak } from '../../server/spectra/peaks';

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
