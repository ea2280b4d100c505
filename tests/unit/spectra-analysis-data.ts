/**
 * Test helper for the analysis tests: loads spectra from the shared reference data
 * (../shared/reference-data, resolved from the repository root; never copied into
 * the repository) and lists the files by set.
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import type { Spectrum } from '../../server/spectra/types';

export const referenceDataDir = path.resolve(import.meta.dirname, '../../../shared/reference-data');

/** Minimal two-column CSV reader (header `wavenumber_cm-1,absorbance`, ascending x). */
export function loadCsv(relPath: string): Spectrum {
  const text = readFileSync(path.join(referenceDataDir, relPath), 'utf8');
  const xs: number[] = [];
  const ys: number[] = [];
  for (const line of text.split(/\r?\n/).slice(1)) {
    if (!line.trim()) continue;
    const [a, b] = line.split(',');
    xs.push(Number(a));
    ys.push(Number(b));
  }
  return {
    x: Float64Array.from(xs),
    y: Float64Array.from(ys),
    meta: {
      title: path.basename(relPath),
      fileName: path.basename(relPath),
      format: 'delimited',
      originalXUnits: 'cm-1',
      originalYUnits: 'absorbance',
      yKind: 'absorbance',
      points: xs.length,
      warnings: [],
    },
  };
}

export function listSet(dir: string): string[] {
  return readdirSync(path.join(referenceDataDir, dir))
    .filter((f) => f.endsWith('.csv'))
    .sort()
    .map((f) => `${dir}/${f}`);
}
