import { describe, expect, it } from 'vitest';
import { SpectrumError } from '../../server/spectra/errors';
import { defaultMidIrAtrMethod, type IdentityMethod } from '../../server/spectra/method';
import { prepareReference, scoreAgainst } from '../../server/spectra/score';
import type { Spectrum } from '../../server/spectra/types';
import { ENGINE_VERSION } from '../../server/spectra/version';
import {
  ESTER_BANDS,
  gaussian,
  seededRandom,
  type SyntheticBand,
  syntheticSpectrum,
  loadReference,
} from './spectra-analysis-data';

const M = defaultMidIrAtrMethod;
const g = gaussian(seededRandom(99));
const noisy = (s: Spectrum, sigma = 0.0003): Spectrum => ({ ...s, y: s.y.map((v) => v + sigma * g()) });
const ester = syntheticSpectrum(ESTER_BANDS);
const KETONE: SyntheticBand[] = ESTER_BANDS.map((b) =>
  b.at === 1740 ? { ...b, at: 1715 } : b.at === 1240 || b.at === 1160 ? { ...b, height: 0.02 } : b,
);

const codeOf = (f: () => unknown): string | undefined => {
  try {
    f();
  } catch (e) {
    return e instanceof SpectrumError ? e.code : 'other';
  }
  return undefined;
};

describe('scoreAgainst', () => {
  it('passes a noisy repeat of the reference, listing every criterion with value, limit and verdict', () => {
    const r = scoreAgainst(noisy(ester), [{ id: 'ref-1', spectrum: ester }], M);
    expect(r.verdict).toBe('pass');
    expect(r.engineVersion).toBe(ENGINE_VERSION);
    expect(r.bestReferenceId).toBe('ref-1');
    expect(r.criteria.map((c) => c.key)).toEqual([
      'correlation',
      'derivative-correlation',
      'band-concordance',
      'extra-bands',
    ]);
    for (const c of r.criteria) {
      expect(c.verdict).toBe('pass');
      expect(Number.isFinite(c.value)).toBe(true);
      expect(Number.isFinite(c.limit)).toBe(true);
    }
    expect(r.criteria[0].value).toBeGreaterThan(0.99);
    expect(r.bands.length).toBeGreaterThanOrEqual(7);
    for (const row of r.bands) expect(Math.abs(row.shift as number)).toBeLessThan(1);
    expect(r.explanation[0]).toMatch(/Identity confirmed/);
  });

  it('fails a different compound and says which band is shifted', () => {
    const r = scoreAgainst(noisy(syntheticSpectrum(KETONE)), [{ id: 'ester', spectrum: ester }], M);
    expect(r.verdict).toBe('fail');
    const row = r.bands.find((b) => Math.abs(b.referenceBand - 1740) < 1);
    expect(row).toMatchObject({ withinTolerance: false });
    expect(row?.shift as number).toBeCloseTo(-25, 0);
    expect(r.explanation.join(' ')).toMatch(/1740\.\d cm-1 \(C=O stretch, ester.*shifted by -25/);
  });

  it('pass needs every criterion against ONE reference; the best reference is the passing one', () => {
    const r = scoreAgainst(
      noisy(ester),
      [
        { id: 'ketone', spectrum: syntheticSpectrum(KETONE) },
        { id: 'ester', spectrum: ester },
      ],
      M,
    );
    expect(r.verdict).toBe('pass');
    expect(r.bestReferenceId).toBe('ester');
    expect(r.references.map((s) => s.verdict)).toEqual(['fail', 'pass']);
  });

  it('one criterion failing is enough to fail', () => {
    const strict: IdentityMethod = { ...M, thresholds: { ...M.thresholds, minCorrelation: 0.99999 } };
    const r = scoreAgainst(noisy(ester, 0.002), [{ id: 'ester', spectrum: ester }], strict);
    expect(r.verdict).toBe('fail');
    expect(r.criteria.filter((c) => c.verdict === 'fail').map((c) => c.key)).toEqual(['correlation']);
  });

  it('refuses a too-weak measurement as invalid: no verdict, advice instead', () => {
    const weak = syntheticSpectrum(ESTER_BANDS.map((b) => ({ ...b, height: b.height / 100 })));
    const r = scoreAgainst(weak, [{ id: 'ester', spectrum: ester }], M);
    expect(r.verdict).toBe('invalid');
    expect(r.criteria).toEqual([]);
    expect(r.bestReferenceId).toBeNull();
    expect(r.quality.problems[0].code).toBe('TOO_WEAK');
    expect(r.explanation.join(' ')).toMatch(/neither a pass nor a fail/);
  });

  it('reports a range that is not covered as an invalid measurement', () => {
    const r = scoreAgainst(syntheticSpectrum(ESTER_BANDS, { from: 1000 }), [{ id: 'ester', spectrum: ester }], M);
    expect(r.verdict).toBe('invalid');
    expect(r.quality.problems.map((p) => p.code)).toEqual(['RANGE_NOT_COVERED']);
  });

  it('is deterministic and accepts references prepared beforehand', () => {
    const sample = noisy(ester);
    const prepared = prepareReference({ id: 'ester', spectrum: ester }, M);
    const a = scoreAgainst(sample, [prepared], M);
    const b = scoreAgainst(sample, [{ id: 'ester', spectrum: ester }], M);
    expect(JSON.stringify(a)).toBe(JSON.stringify(b));
  });

  it('refuses a reference prepared for other method settings, an invalid method and an empty reference set', () => {
    const prepared = prepareReference({ id: 'ester', spectrum: ester }, { ...M, gridStep: 2 });
    expect(codeOf(() => scoreAgainst(ester, [prepared], M))).toBe('METHOD_MISMATCH');
    expect(codeOf(() => scoreAgainst(ester, [{ id: 'e', spectrum: ester }], { ...M, gridStep: -1 }))).toBe(
      'INVALID_METHOD',
    );
    expect(codeOf(() => scoreAgainst(ester, [], M))).toBe('NO_REFERENCES');
  });

  it('uses QA-listed reference bands when given', () => {
    const r = scoreAgainst(
      noisy(ester),
      [{ id: 'ester', spectrum: ester, bands: [{ position: 1740, assignment: 'ester C=O (QA)' }, { position: 1600 }] }],
      M,
    );
    expect(r.bands.map((b) => b.referenceBand)).toEqual([1600, 1740]);
    expect(r.bands[1].assignment).toBe('ester C=O (QA)');
    expect(r.criteria.find((c) => c.key === 'band-concordance')).toMatchObject({ value: 1, limit: 2, verdict: 'fail' });
    expect(r.verdict).toBe('fail');
  });
});

describe('reference names in the explanation', () => {
  // Reviewers know references by their codes, not database ids (common practice).
  it('uses the label the caller gives, and the id otherwise', () => {
    const m = defaultMidIrAtrMethod;
    const a = loadReference('atr-ftir-fibres/cotton_natural-brown_s6.2_r1.csv');
    const b = loadReference('atr-ftir-fibres/cotton_natural-brown_s6.2_r2.csv');
    const named = scoreAgainst(a, [{ id: '17', label: 'REF-COT-0002', spectrum: b }], m);
    expect(named.explanation[0]).toContain('REF-COT-0002');
    expect(named.explanation[0]).not.toMatch(/reference 17\b/);
    const plain = scoreAgainst(a, [{ id: '17', spectrum: b }], m);
    expect(plain.explanation[0]).toMatch(/reference 17\b/);
  });
});
