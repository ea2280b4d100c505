/**
 * Test helper for the analysis tests: reads spectra from the shared reference data
 * (../shared/reference-data, resolved from the repository root; never copied into
 * the repository) with the engine's own readSpectrum, and lists the files by set.
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { readSpectrum } from '../../server/spectra/parse';
import type { Spectrum } from '../../server/spectra/types';

export const referenceDataDir = path.resolve(import.meta.dirname, '../../../shared/reference-data');

const cache = new Map<string, Spectrum>();

/** A reference-data file (path relative to ../shared/reference-data) read by readSpectrum. */
export function loadReference(relPath: string): Spectrum {
  let s = cache.get(relPath);
  if (!s) {
    s = readSpectrum(new Uint8Array(readFileSync(path.join(referenceDataDir, relPath))), path.basename(relPath));
    cache.set(relPath, s);
  }
  return { x: Float64Array.from(s.x), y: Float64Array.from(s.y), meta: { ...s.meta, warnings: [...s.meta.warnings] } };
}

/** The CSV files of one folder of the reference data, sorted, as relative paths. */
export function listSet(dir: string): string[] {
  return readdirSync(path.join(referenceDataDir, dir))
    .filter((f) => f.endsWith('.csv'))
    .sort()
    .map((f) => `${dir}/${f}`);
}

/** File name without folder and extension, e.g. "nylon6_s074". */
export function stem(relPath: string): string {
  return path.basename(relPath).replace(/\.[^.]+$/, '');
}

/** Seeded pseudo-random generator (deterministic tests): uniform in [0, 1). */
export function seededRandom(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 4294967296;
  };
}

/** Standard normal deviates from a uniform generator (Box-Muller). */
export function gaussian(rand: () => number): () => number {
  return () => Math.sqrt(-2 * Math.log(1 - rand())) * Math.cos(2 * Math.PI * rand());
}

export interface SyntheticBand {
  /** Position, cm-1. */
  at: number;
  /** Peak absorbance. */
  height: number;
  /** Full width at half height, cm-1. */
  fwhm: number;
}

/** A synthetic absorbance spectrum: Gaussian bands on an ascending grid, optional straight baseline. */
export function syntheticSpectrum(
  bands: SyntheticBand[],
  opts: { from?: number; to?: number; step?: number; offset?: number; slope?: number } = {},
): Spectrum {
  const { from = 600, to = 4000, step = 1, offset = 0.01, slope = 0 } = opts;
  const n = Math.floor((to - from) / step + 1e-9) + 1;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = from + i * step;
    let v = offset + slope * (x[i] - from);
    for (const b of bands) {
      const s = b.fwhm / (2 * Math.sqrt(2 * Math.log(2)));
      v += b.height * Math.exp(-((x[i] - b.at) ** 2) / (2 * s * s));
    }
    y[i] = v;
  }
  return {
    x,
    y,
    meta: {
      title: 'synthetic',
      fileName: 'synthetic.csv',
      format: 'delimited',
      originalXUnits: 'cm-1',
      originalYUnits: 'absorbance',
      yKind: 'absorbance',
      points: n,
      warnings: [],
    },
  };
}

/** A plausible organic mid-IR spectrum (bands of an aliphatic ester) for synthetic tests. */
export const ESTER_BANDS: SyntheticBand[] = [
  { at: 2955, height: 0.12, fwhm: 25 },
  { at: 2925, height: 0.2, fwhm: 25 },
  { at: 2855, height: 0.1, fwhm: 20 },
  { at: 1740, height: 0.45, fwhm: 22 },
  { at: 1465, height: 0.08, fwhm: 18 },
  { at: 1375, height: 0.06, fwhm: 14 },
  { at: 1240, height: 0.3, fwhm: 40 },
  { at: 1160, height: 0.22, fwhm: 30 },
  { at: 1045, height: 0.15, fwhm: 25 },
  { at: 725, height: 0.05, fwhm: 12 },
];
