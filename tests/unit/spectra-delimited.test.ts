/**
 * Delimited-text reading (server/spectra/delimited.ts, delimited-units.ts) through
 * readSpectrum. Real data: every CSV under ../shared/reference-data (see its README
 * for sources); layout variants are written here from one real spectrum so that
 * the same numbers must come back whatever the separator or decimal mark.
 */
import { readFileSync, readdirSync, statSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { readSpectrum, SpectrumError } from '../../server/spectra';

const repoRoot = path.resolve(__dirname, '../..');
const refData = path.resolve(repoRoot, '../shared/reference-data');

function csvFiles(dir: string): string[] {
  const out: string[] = [];
  for (const name of readdirSync(dir).sort()) {
    const p = path.join(dir, name);
    if (statSync(p).isDirectory()) out.push(...csvFiles(p));
    else if (name.endsWith('.csv')) out.push(p);
  }
  return out;
}

/** Reads a reference CSV independently of the engine (header `wavenumber_cm-1,absorbance`). */
function naiveRead(file: string): { x: number[]; y: number[] } {
  const rows = readFileSync(file, 'utf8')
    .trim()
    .split('\n')
    .slice(1)
    .map((l) => l.split(',').map(Number));
  return { x: rows.map((r) => r[0]), y: rows.map((r) => r[1]) };
}

const codeOf = (f: () => unknown) => {
  try {
    f();
  } catch (e) {
    if (e instanceof SpectrumError) return e.code;
    throw e;
  }
  return 'no error';
};

describe('reference CSV files (../shared/reference-data, all subfolders)', () => {
  const files = csvFiles(refData);
  it('finds the reference CSV files', () => {
    // README of ../shared/reference-data lists 135 CSV files across six folders.
    expect(files.length).toBeGreaterThanOrEqual(100);
  });
  it.each(files.map((f) => [path.relative(refData, f), f]))('%s reads with the values of the file', (_name, file) => {
    const s = readSpectrum(new Uint8Array(readFileSync(file)), path.basename(file));
    const ref = naiveRead(file);
    expect(s.meta.points).toBe(ref.x.length);
    expect(s.meta.format).toBe('delimited');
    expect(s.meta.yKind).toBe('absorbance');
    expect(s.meta.originalXUnits).toBe('wavenumber_cm-1');
    expect(s.meta.originalYUnits).toBe('absorbance');
    // The README says every file is sorted by ascending wavenumber: read unchanged.
    expect(Array.from(s.x)).toEqual(ref.x);
    expect(Array.from(s.y)).toEqual(ref.y);
  });
});

describe('layouts: separator, decimal mark, header', () => {
  // Source: ../shared/reference-data/atr-ftir/polystyrene_film.csv (every 9th row, 650-3997 cm-1).
  const full = naiveRead(path.join(refData, 'atr-ftir/polystyrene_film.csv'));
  const ref = { x: full.x.filter((_, i) => i % 9 === 0), y: full.y.filter((_, i) => i % 9 === 0) };
  const n = ref.x.length;
  const rows = (sep: string, dec: '.' | ',') =>
    ref.x.map((x, i) => [x, ref.y[i]].map((v) => (dec === ',' ? String(v).replace('.', ',') : String(v))).join(sep));
  const variants: [string, string][] = [
    ['comma + point, header', ['cm-1,A', ...rows(',', '.')].join('\n')],
    ['semicolon + decimal comma, header', ['Wellenzahl (cm-1);Absorbanz (A)', ...rows(';', ',')].join('\r\n')],
    ['semicolon + point', ['cm-1;absorbance', ...rows(';', '.')].join('\n')],
    ['tab + point, title and header', ['Polystyrene film test', 'cm-1\tA', ...rows('\t', '.')].join('\n')],
    ['tab + decimal comma', ['cm-1\tabsorbance', ...rows('\t', ',')].join('\n')],
    ['whitespace + decimal comma', ['Wavenumber (cm-1)   Absorbance', ...rows('  ', ',')].join('\n')],
    ['whitespace, no header', rows(' ', '.').join('\n')],
    ['trailing delimiter and CR line ends', ['cm-1,A,', ...rows(',', '.').map((r) => r + ',')].join('\r')],
    ['quoted fields', ['"cm-1","A"', ...rows('","', '.').map((r) => `"${r}"`)].join('\n')],
  ];
  it.each(variants)('%s gives the same numbers', (_name, text) => {
    const s = readSpectrum(text, 'variant.csv');
    expect(Array.from(s.x)).toEqual(ref.x.slice(0, n));
    expect(Array.from(s.y)).toEqual(ref.y.slice(0, n));
  });

  it('reads a title line into meta.title', () => {
    const s = readSpectrum(variants[3][1], 'variant.txt');
    expect(s.meta.title).toBe('Polystyrene film test');
  });
  it('a file without a header warns that units were inferred', () => {
    const s = readSpectrum(variants[6][1], 'variant.txt');
    expect(s.meta.warnings.join(' ')).toMatch(/does not state the x units/);
    expect(s.meta.warnings.join(' ')).toMatch(/does not state the y units/);
  });
});

describe('units from the header and inferred units', () => {
  // Synthetic band shape (common practice: a Gaussian band on a flat baseline).
  const nmX = Array.from({ length: 701 }, (_, i) => 1100 + 2 * i); // 1100-2500 nm, 2 nm steps
  const band = (i: number) => 0.05 + 0.8 * Math.exp(-(((i - 350) / 40) ** 2));
  const csv = (header: string | null, xs: number[], ys: number[]) =>
    [...(header ? [header] : []), ...xs.map((x, i) => `${x},${ys[i]}`)].join('\n');

  it('%T header: T = 10 % gives A = 1 (A = -log10 T)', () => {
    const xs = Array.from({ length: 60 }, (_, i) => 4000 - 10 * i);
    const s = readSpectrum(
      csv(
        'cm-1,%T',
        xs,
        xs.map(() => 10),
      ),
      't.csv',
    );
    expect(s.meta.yKind).toBe('absorbance');
    for (const v of s.y) expect(v).toBeCloseTo(1, 12);
    expect(s.x[0]).toBe(3410); // descending input is returned ascending
  });
  it('T header with a fraction: T = 0.1 gives A = 1', () => {
    const xs = Array.from({ length: 60 }, (_, i) => 1000 + 10 * i);
    const s = readSpectrum(
      csv(
        'cm-1,T',
        xs,
        xs.map(() => 0.1),
      ),
      't.csv',
    );
    for (const v of s.y) expect(v).toBeCloseTo(1, 12);
  });
  it('nm header: 2500 nm becomes 4000 cm-1 (1e7 / nm) and order becomes ascending', () => {
    const s = readSpectrum(
      csv(
        'nm,A',
        nmX,
        nmX.map((_, i) => band(i)),
      ),
      'nir.csv',
    );
    expect(s.x[0]).toBeCloseTo(4000, 9);
    expect(s.x[s.x.length - 1]).toBeCloseTo(1e7 / 1100, 9);
    expect(s.y[0]).toBeCloseTo(band(700), 12); // the 2500 nm point comes first now
  });
  it('um header: 2.5 um becomes 4000 cm-1 (1e4 / um)', () => {
    const xs = Array.from({ length: 100 }, (_, i) => 2.5 + 0.1 * i);
    const s = readSpectrum(
      csv(
        'wavelength (µm),absorbance',
        xs,
        xs.map(() => 0.2),
      ),
      'um.csv',
    );
    expect(s.x[s.x.length - 1]).toBeCloseTo(4000, 9);
  });
  it('headerless nm data on an even 2 nm step are read as nm, with a warning', () => {
    const s = readSpectrum(
      csv(
        null,
        nmX,
        nmX.map((_, i) => band(i)),
      ),
      'nir.csv',
    );
    expect(s.x[0]).toBeCloseTo(4000, 9);
    expect(s.meta.warnings.join(' ')).toMatch(/read as nm/);
  });
  it('headerless percent transmittance (median > 10, baseline on top) is read as %T', () => {
    const xs = Array.from({ length: 200 }, (_, i) => 4000 - 15 * i);
    const t = xs.map((_, i) => 95 - 80 * Math.exp(-(((i - 100) / 10) ** 2)));
    const s = readSpectrum(csv(null, xs, t), 't.csv');
    expect(s.meta.warnings.join(' ')).toMatch(/transmittance-percent/);
    expect(Math.max(...s.y)).toBeCloseTo(-Math.log10(0.15), 2);
  });
  it('headerless 0..1 values with the baseline on top are refused as ambiguous', () => {
    const xs = Array.from({ length: 200 }, (_, i) => 4000 - 15 * i);
    const t = xs.map((_, i) => 0.95 - 0.8 * Math.exp(-(((i - 100) / 10) ** 2)));
    expect(codeOf(() => readSpectrum(csv(null, xs, t), 't.csv'))).toBe('UNKNOWN_Y_UNITS');
    // ... and the same data read when the upload states the unit
    const s = readSpectrum(csv(null, xs, t), 't.csv', { yUnits: 'transmittance-fraction' });
    expect(Math.max(...s.y)).toBeCloseTo(-Math.log10(0.15), 9);
  });
  it('headerless 800-1300 on an uneven step is ambiguous between cm-1 and nm', () => {
    const xs = Array.from({ length: 1000 }, (_, i) => 800.31 + 0.4821 * i);
    expect(
      codeOf(() =>
        readSpectrum(
          csv(
            null,
            xs,
            xs.map(() => 0.1),
          ),
          'x.csv',
        ),
      ),
    ).toBe('UNKNOWN_X_UNITS');
  });
  it('reflectance in percent becomes log(1/R)', () => {
    const xs = Array.from({ length: 100 }, (_, i) => 4000 + 10 * i);
    const s = readSpectrum(
      csv(
        'cm-1,%R',
        xs,
        xs.map(() => 1),
      ),
      'r.csv',
    );
    expect(s.meta.yKind).toBe('log-inverse-reflectance');
    for (const v of s.y) expect(v).toBeCloseTo(2, 12);
  });
  it('Kubelka-Munk and log(1/R) are kept as they are, with their kind', () => {
    const xs = Array.from({ length: 100 }, (_, i) => 4000 + 10 * i);
    expect(
      readSpectrum(
        csv(
          'cm-1,Kubelka-Munk',
          xs,
          xs.map(() => 3),
        ),
        'k.csv',
      ).meta.yKind,
    ).toBe('kubelka-munk');
    const l = readSpectrum(
      csv(
        'cm-1,log(1/R)',
        xs,
        xs.map(() => 0.3),
      ),
      'l.csv',
    );
    expect(l.meta.yKind).toBe('log-inverse-reflectance');
    expect(l.y[0]).toBe(0.3);
  });
  it('a y column labelled "counts" is refused', () => {
    const xs = Array.from({ length: 100 }, (_, i) => 4000 + 10 * i);
    expect(
      codeOf(() =>
        readSpectrum(
          csv(
            'cm-1,counts',
            xs,
            xs.map(() => 3),
          ),
          'c.csv',
        ),
      ),
    ).toBe('UNKNOWN_Y_UNITS');
  });
});
