/**
 * In-memory library of approved references for one method grid, for search.
 *
 * All prepared references sit in ONE contiguous Float32Array (row-major, one row
 * per reference), each row mean-centred and scaled to unit Euclidean norm. The
 * Pearson correlation of a sample with every reference is then a single
 * matrix-vector product: r_i = sum_j L[i, j] * q[j], with q the sample prepared the
 * same way. Library search is a screening aid (ASTM E2310), not an identity
 * verdict: identity is decided by scoreAgainst against the grade's references.
 */
import { centredUnit } from './correlation';
import type { IdentityMethod } from './method';
import { type PreparedSpectrum, prepare } from './preprocess';
import { type PreparedReference, prepareReference, type ReferenceInput, assertValidMethod } from './score';
import type { Spectrum } from './types';

export interface Library {
  method: IdentityMethod;
  /** preparationKey of the method. */
  key: string;
  /** Number of references (rows). */
  size: number;
  /** Points per row (used grid points). */
  width: number;
  ids: string[];
  materialIds: string[];
  /** size x width, row-major, rows centred and unit-normalised. */
  data: Float32Array;
  /** The prepared references, for full scoring (specificity). */
  references: PreparedReference[];
}

export interface LibraryEntry extends ReferenceInput {
  materialId: string;
}

export interface SearchHit {
  id: string;
  materialId: string;
  /** Pearson correlation of the prepared spectra. */
  score: number;
}

/** Builds the library; entries may be raw (prepared here) or prepared for this method. */
export function buildLibrary(entries: Array<LibraryEntry | PreparedReference>, method: IdentityMethod): Library {
  assertValidMethod(method);
  const refs = entries.map((e) => ('prepared' in e ? e : prepareReference(e, method)));
  const key = refs[0]?.key ?? '';
  const width = refs[0]?.unit.length ?? 0;
  const data = new Float32Array(refs.length * width);
  refs.forEach((r, i) => {
    if (r.key !== key || r.unit.length !== width) throw new RangeError(`Reference ${r.id} was prepared for other method settings.`);
    data.set(r.unit, i * width);
  });
  return {
    method,
    key,
    size: refs.length,
    width,
    ids: refs.map((r) => r.id),
    materialIds: refs.map((r) => r.materialId ?? r.id),
    data,
    references: refs,
  };
}

/** Correlation of a centred unit query with every row: one pass over the library. */
export function correlateAll(library: Library, query: Float32Array): Float32Array {
  const { data, size, width } = library;
  const out = new Float32Array(size);
  const end4 = width - (width % 4);
  for (let i = 0, o = 0; i < size; i++, o += width) {
    let s0 = 0;
    let s1 = 0;
    let s2 = 0;
    let s3 = 0;
    let j = 0;
    for (; j < end4; j += 4) {
      s0 += data[o + j] * query[j];
      s1 += data[o + j + 1] * query[j + 1];
      s2 += data[o + j + 2] * query[j + 2];
      s3 += data[o + j + 3] * query[j + 3];
    }
    for (; j < width; j++) s0 += data[o + j] * query[j];
    out[i] = s0 + s1 + s2 + s3;
  }
  return out;
}

/** Indices of the k largest scores, best first (ties: lower index first). */
export function topK(scores: Float32Array, k: number): number[] {
  const n = Math.min(k, scores.length);
  const best: number[] = [];
  for (let i = 0; i < scores.length; i++) {
    const s = scores[i];
    if (best.length === n && s <= scores[best[n - 1]]) continue;
    let pos = best.length;
    while (pos > 0 && scores[best[pos - 1]] < s) pos--;
    best.splice(pos, 0, i);
    if (best.length > n) best.pop();
  }
  return best;
}

/** The sample as the library's query vector (prepared, centred, unit norm, float32). */
export function queryVector(library: Library, sample: Spectrum | PreparedSpectrum): Float32Array {
  const prepared = 'grid' in sample ? sample : prepare(sample, library.method);
  if (prepared.y.length !== library.width) throw new RangeError('The sample was prepared for other method settings.');
  return Float32Array.from(centredUnit(prepared.y));
}

/** The k references most correlated with the sample, best first. */
export function searchLibrary(library: Library, sample: Spectrum | PreparedSpectrum, k: number): SearchHit[] {
  if (library.size === 0) return [];
  const scores = correlateAll(library, queryVector(library, sample));
  return topK(scores, k).map((i) => ({
    id: library.ids[i],
    materialId: library.materialIds[i],
    score: Math.max(-1, Math.min(1, scores[i])),
  }));
}
