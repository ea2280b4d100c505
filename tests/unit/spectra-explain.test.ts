import { describe, expect, it } from 'vitest';
import { bandMeaning } from '../../server/spectra/explain';
import { defaultMidIrAtrMethod } from '../../server/spectra/method';
import { scoreAgainst } from '../../server/spectra/score';
import { ESTER_BANDS, syntheticSpectrum } from './spectra-analysis-data';

const M = defaultMidIrAtrMethod;

describe('explanation in plain words', () => {
  it('a wet sample: extra broad band near 3400 cm-1 explained as hydrogen-bonded O-H, often water', () => {
    const wet = syntheticSpectrum([
      ...ESTER_BANDS,
      { at: 3400, height: 0.3, fwhm: 280 },
      { at: 1640, height: 0.12, fwhm: 60 },
    ]);
    const r = scoreAgainst(wet, [{ id: 'ester-ref', spectrum: syntheticSpectrum(ESTER_BANDS) }], M);
    expect(r.verdict).toBe('fail');
    const text = r.explanation.join('\n');
    expect(text).toMatch(
      /Extra broad band at 34\d\d\.\d cm-1, not in the reference: O-H stretch, hydrogen-bonded.*often water/,
    );
    expect(text).toMatch(/points to water/);
    expect(r.extraBands.some((e) => Math.abs(e.position - 3400) < 5)).toBe(true);
  });

  it('a missing band is named with its assignment', () => {
    const noCarbonyl = syntheticSpectrum(ESTER_BANDS.filter((b) => b.at !== 1740));
    const r = scoreAgainst(noCarbonyl, [{ id: 'ester-ref', spectrum: syntheticSpectrum(ESTER_BANDS) }], M);
    expect(r.verdict).toBe('fail');
    expect(r.explanation.join('\n')).toMatch(
      /Reference band at 1740\.\d cm-1 \(C=O stretch, ester.*\) is missing in the sample/,
    );
    expect(r.explanation[0]).toMatch(/not confirmed against reference ester-ref/);
  });

  it('failed criteria are described with value and limit', () => {
    const other = syntheticSpectrum([
      { at: 3300, height: 0.3, fwhm: 200 },
      { at: 1050, height: 0.6, fwhm: 80 },
    ]);
    const r = scoreAgainst(other, [{ id: 'ester-ref', spectrum: syntheticSpectrum(ESTER_BANDS) }], M);
    const text = r.explanation.join('\n');
    expect(text).toMatch(
      /Correlation of the prepared spectra is -?0\.\d{4} \(at least 0\.95 required\): the overall shapes of the spectra differ/,
    );
    expect(text).toMatch(/reference bands were found in the sample within tolerance/);
  });

  it('band meanings come from the correlation table', () => {
    expect(bandMeaning(3400, 250)).toMatch(/often water/);
    expect(bandMeaning(2340, 20)).toMatch(/background and sample/);
  });
});
