/**
 * In-memory library of approved references for one method grid, for search.
 *
 * All prepared references sit in ONE contiguous Float32Array (row-major, one row
 * per reference), each row mean-centred and scaled to unit Euclidean norm. The
 * Pearson correlation of a sample with every reference is then a single
 * matrix-vector product: r_i = sum_j L[i, j] * q[j], with q the sample prepared the
 * same way, computed by a SIMD kernel at about the speed of reading the matrix
 * from memory (dot-kernel.ts). Library search is a screening aid (ASTM E2310),
 * not an identity verdict: identity is decided by scoreAgainst against the
 * grade's references.
 */
import { centredUnit } from './correlation';
import { createDotKernel, type DotKernel } from './dot-kernel';
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
  /** The prepared references, for full scoring (specificity); empty when built with keepReferences: false. */
  references: PreparedReference[];
  /** The matrix-vector product over `data`. */
  kernel: DotKernel;
}

export interface BuildLibraryOptions {
  /**
   * Keep every prepared reference (needed by specificityMatrix). Default true.
   * false keeps only the float32 matrix: about 12 kB per reference on a
   * 3,100-point grid instead of some 150 kB, for large search libraries.
   */
  keepReferences?: boolean;
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

/**
 * Builds the library. Entries may be raw (prepared here, one at a time, so an
 * iterable can stream a large library) or prepared for this method.
 */
export function buildLibrary(
  entries: Iterable<LibraryEntry | PreparedReference>,
  method: IdentityMethod,
  options: BuildLibraryOptions = {},
): Library {
  assertValidMethod(method);
  const keep = options.keepReferences ?? true;
  const references: PreparedReference[] = [];
  const rows: Float32Array[] = [];
  const ids: string[] = [];
  const materialIds: string[] = [];
  let key: string | null = null;
  let width = 0;
  for (const e of entries) {
    const r = 'prepared' in e ? e : prepareReference(e, method);
    if (key === null) {
      key = r.key;
      width = r.unit.length;
    } else if (r.key !== key || r.unit.length !== width) {
      throw new RangeError(`Reference ${r.id} was prepared for other method settings.`);
    }
    rows.push(Float32Array.from(r.unit));
    ids.push(r.id);
    materialIds.push(r.materialId ?? r.id);
    if (keep) references.push(r);
  }
  const kernel = createDotKernel(rows.length, width);
  rows.forEach((row, i) => kernel.data.set(row, i * width));
  return { method, key: key ?? '', size: rows.length, width, ids, materialIds, data: kernel.data, references, kernel };
}

/** Correlation of a centred unit query with every row: one matrix-vector product (a fresh array). */
export function correlateAll(library: Library, query: Float32Array): Float32Array {
  return Float32Array.from(product(library, query));
}

/** The kernel's product; its result array is overwritten by the next search on this library. */
function product(library: Library, query: Float32Array): Float32Array {
  if (library.size === 0) return new Float32Array(0);
  library.kernel.query.set(query);
  return library.kernel.run();
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
  const scores = product(library, queryVector(library, sample));
  return topK(scores, k).map((i) => ({
    id: library.ids[i],
    materialId: library.materialIds[i],
    score: Math.max(-1, Math.min(1, scores[i])),
  }));
}
