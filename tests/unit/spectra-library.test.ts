import { describe, expect, it } from 'vitest';
import { pearson } from '../../server/spectra/correlation';
import { buildLibrary, correlateAll, queryVector, searchLibrary, topK } from '../../server/spectra/library';
import { defaultMidIrAtrMethod } from '../../server/spectra/method';
import { prepare } from '../../server/spectra/preprocess';
import { prepareReference } from '../../server/spectra/score';
import { listSet, loadReference, stem } from './spectra-analysis-data';

const M = defaultMidIrAtrMethod;
const files = listSet('atr-ftir-fibres').slice(0, 20);
const entries = files.map((f) => ({ id: stem(f), materialId: stem(f).split('_')[0], spectrum: loadReference(f) }));
const library = buildLibrary(entries, M);

describe('reference library', () => {
  it('holds all prepared references in ONE contiguous Float32Array, rows mean-centred with unit norm', () => {
    expect(library.data).toBeInstanceOf(Float32Array);
    expect(library.data.length).toBe(library.size * library.width);
    expect(library.size).toBe(20);
    for (let i = 0; i < library.size; i++) {
      const row = library.data.subarray(i * library.width, (i + 1) * library.width);
      let sum = 0;
      let sq = 0;
      for (const v of row) {
        sum += v;
        sq += v * v;
      }
      expect(Math.abs(sum)).toBeLessThan(1e-4);
      expect(sq).toBeCloseTo(1, 5);
    }
  });

  it('one matrix-vector product gives the Pearson correlation with every reference (float32: to 1e-5)', () => {
    const sample = loadReference('atr-ftir-fibres/silk_Bombyx-mori_s16.2.csv');
    const scores = correlateAll(library, queryVector(library, sample));
    const p = prepare(sample, M);
    entries.forEach((e, i) => {
      expect(Math.abs(scores[i] - pearson(p.y, prepare(e.spectrum, M).y))).toBeLessThan(1e-5);
    });
  });

  it('search returns the top k, best first; a library member finds itself with score 1', () => {
    const sample = loadReference(files[7]);
    const hits = searchLibrary(library, sample, 5);
    expect(hits).toHaveLength(5);
    expect(hits[0]).toMatchObject({ id: stem(files[7]) });
    expect(hits[0].score).toBeCloseTo(1, 5);
    for (let i = 1; i < hits.length; i++) expect(hits[i].score).toBeLessThanOrEqual(hits[i - 1].score);
    expect(searchLibrary(library, sample, 100)).toHaveLength(20);
  });

  it('topK keeps ties in index order and handles k = 0', () => {
    const s = Float32Array.from([0.2, 0.9, 0.5, 0.9, 0.1]);
    expect(topK(s, 3)).toEqual([1, 3, 2]);
    expect(topK(s, 0)).toEqual([]);
  });

  it('accepts prepared references and refuses references prepared for other settings', () => {
    const prepared = entries.slice(0, 2).map((e) => prepareReference(e, M));
    expect(buildLibrary(prepared, M).size).toBe(2);
    const other = prepareReference(entries[2], { ...M, gridStep: 2 });
    expect(() => buildLibrary([...prepared, other], M)).toThrow(/other method settings/);
  });

  it('an empty library returns no hits', () => {
    expect(searchLibrary(buildLibrary([], M), entries[0].spectrum, 3)).toEqual([]);
  });
});
