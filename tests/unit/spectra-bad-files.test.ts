/**
 * Bad input: every file in tests/bad-files gives its own expected SpectrumError
 * code (table below, mirrored in tests/bad-files/README.md), never another kind of
 * error; large noise is generated here at run time. Hangs are caught by vitest's
 * timeout, not by timing assertions.
 */
import { readdirSync, readFileSync } from 'node:fs';
import path from 'node:path';
import { convert } from 'jcampconverter';
import { describe, expect, it } from 'vitest';
import {
  decodeJcamp,
  MAX_FILE_BYTES,
  readSpectrum,
  SpectrumError,
  SPECTRUM_ERROR_CODES,
  type SpectrumErrorCode,
} from '../../server/spectra';

const dir = path.resolve(__dirname, '../bad-files');
const bytes = (name: string) => new Uint8Array(readFileSync(path.join(dir, name)));

const EXPECTED: Record<string, SpectrumErrorCode> = {
  'empty.csv': 'EMPTY_FILE',
  'whitespace-only.txt': 'EMPTY_FILE',
  'image-named.csv': 'BINARY_FILE',
  'spreadsheet-renamed.csv': 'BINARY_FILE',
  'one-column.csv': 'ONE_COLUMN',
  'header-only.csv': 'NO_DATA_ROWS',
  'prose.txt': 'NO_DATA_ROWS',
  'text-in-numbers.csv': 'TEXT_IN_NUMBERS',
  'nan-values.csv': 'NON_FINITE',
  'empty-field.csv': 'NON_FINITE',
  'three-columns.csv': 'TOO_MANY_COLUMNS',
  'ragged-rows.csv': 'INCONSISTENT_COLUMNS',
  'too-few-points.csv': 'TOO_FEW_POINTS',
  'descending-duplicates.csv': 'DUPLICATE_X',
  'two-scans-appended.csv': 'NON_MONOTONIC_X',
  'percent-t-above-100.csv': 'TRANSMITTANCE_RANGE',
  'zero-transmittance.csv': 'NON_POSITIVE_TRANSMITTANCE',
  'unknown-x-units.csv': 'UNKNOWN_X_UNITS',
  'unknown-y-units.csv': 'UNKNOWN_Y_UNITS',
  'micrometres-labelled-cm-1.csv': 'X_UNITS_MISMATCH',
  'nm-data-labelled-cm-1.jdx': 'X_UNITS_MISMATCH',
  'truncated.jdx': 'JCAMP_TRUNCATED',
  'missing-end.jdx': 'JCAMP_TRUNCATED',
  'wrong-xydata-form.jdx': 'JCAMP_UNSUPPORTED_FORM',
  'dif-check-corrupted.jdx': 'JCAMP_Y_CHECK',
  'npoints-mismatch.jdx': 'JCAMP_NPOINTS_MISMATCH',
  'dup-count-bomb.jdx': 'JCAMP_NPOINTS_MISMATCH',
  'x-check-lastx-edited.jdx': 'JCAMP_X_CHECK',
  'bad-character.jdx': 'JCAMP_BAD_CHARACTER',
  'nmr-spectrum.jdx': 'JCAMP_NOT_IR',
  'no-title.jdx': 'JCAMP_UNREADABLE',
  'label-without-equals.jdx': 'JCAMP_UNREADABLE',
  'csv-named-jdx.jdx': 'JCAMP_UNREADABLE',
  'missing-npoints.jdx': 'JCAMP_MISSING_LABEL',
  'missing-data-type.jdx': 'JCAMP_MISSING_LABEL',
  'bad-npoints-value.jdx': 'JCAMP_BAD_LABEL_VALUE',
  'arbitrary-y-units.jdx': 'UNKNOWN_Y_UNITS',
  'question-mark-value.jdx': 'NON_FINITE',
  'two-spectra-link-block.jdx': 'JCAMP_MULTIBLOCK',
  'peak-table-only.jdx': 'JCAMP_PEAK_TABLE_ONLY',
};

function outcome(run: () => unknown): { code: string; message: string } {
  try {
    run();
    return { code: 'read without error', message: '' };
  } catch (e) {
    if (e instanceof SpectrumError) return { code: e.code, message: e.message };
    return { code: `CRASH: ${(e as Error)?.name}: ${(e as Error)?.message}`, message: '' };
  }
}

/** Deterministic pseudo-random numbers (mulberry32), so that failures can be replayed. */
function rng(seed: number) {
  return () => {
    seed = (seed + 0x6d2b79f5) | 0;
    let t = Math.imul(seed ^ (seed >>> 15), 1 | seed);
    t = (t + Math.imul(t ^ (t >>> 7), 61 | t)) ^ t;
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

describe('the committed corpus in tests/bad-files', () => {
  const onDisk = readdirSync(dir, { withFileTypes: true })
    .filter((d) => d.isFile() && !['README.md', 'generate.ts'].includes(d.name))
    .map((d) => d.name)
    .sort();

  it('holds at least 25 bad files, each listed here and in README.md with the same code', () => {
    expect(onDisk.length).toBeGreaterThanOrEqual(25);
    expect(onDisk).toEqual(Object.keys(EXPECTED).sort());
    const readme = readFileSync(path.join(dir, 'README.md'), 'utf8');
    for (const [file, code] of Object.entries(EXPECTED))
      expect(readme).toMatch(new RegExp(`\\| \`${file.replace(/\./g, '\\.')}\` \\| \`${code}\` \\|`));
  });

  it.each(Object.entries(EXPECTED))('%s -> %s', (file, code) => {
    const r = outcome(() => readSpectrum(bytes(file), file));
    expect(r.code).toBe(code);
    // A plain sentence for the operator that ends by saying what to do.
    expect(r.message).toMatch(/^[A-Z"].{30,}\.$/s);
    expect(r.message).not.toMatch(/undefined|\(NaN\)|\(Infinity\)|\[object|\n\s+at /);
  });

  it('every code is one of the published codes', () => {
    for (const code of Object.values(EXPECTED)) expect(SPECTRUM_ERROR_CODES).toContain(code);
  });
});

describe('controls written by the same generator read without error', () => {
  it('the AFFN and DIF/DUP controls decode to the same spectrum, equal to jcampconverter@10.0.2', () => {
    const affn = readSpectrum(bytes('controls/control-affn.jdx'), 'control-affn.jdx');
    const dif = readSpectrum(bytes('controls/control-difdup.jdx'), 'control-difdup.jdx');
    expect(affn.meta.points).toBe(361);
    expect(Array.from(dif.y)).toEqual(Array.from(affn.y));
    expect(Array.from(dif.x)).toEqual(Array.from(affn.x));
    const text = readFileSync(path.join(dir, 'controls/control-difdup.jdx'), 'utf8');
    expect(Array.from(decodeJcamp(text).pages[0].y)).toEqual(convert(text).flatten[0].spectra[0].data.y);
  });
  it('the %T control converts to the absorbance of the AFFN control (A = -log10 T)', () => {
    const t = readSpectrum(bytes('controls/control-percent-t.csv'), 'control-percent-t.csv');
    const a = readSpectrum(bytes('controls/control-affn.jdx'), 'control-affn.jdx');
    for (let i = 0; i < a.y.length; i++) expect(t.y[i]).toBeCloseTo(a.y[i], 4);
  });
});

describe('large and random input (generated at run time, not committed)', () => {
  it('21 MB of random bytes is refused as too large, as bytes and as text', () => {
    const size = MAX_FILE_BYTES + 1024 * 1024;
    const buf = new Uint8Array(size);
    const r = rng(1);
    for (let i = 0; i < size; i++) buf[i] = (r() * 256) | 0;
    expect(outcome(() => readSpectrum(buf, 'noise.csv')).code).toBe('FILE_TOO_LARGE');
    expect(outcome(() => readSpectrum('1'.repeat(size), 'noise.csv')).code).toBe('FILE_TOO_LARGE');
  });
  it('19 MB of random bytes is refused as binary', () => {
    const size = 19 * 1024 * 1024;
    const buf = new Uint8Array(size);
    const r = rng(2);
    for (let i = 0; i < size; i++) buf[i] = (r() * 256) | 0;
    expect(outcome(() => readSpectrum(buf, 'noise.jdx')).code).toBe('BINARY_FILE');
  });
  // The text cases repeat a 1 MB block of noise up to 19 MB: generating 19 MB
  // character by character would only slow the test, not change what is read.
  const repeatTo = (block: string, bytes: number) => block.repeat(Math.ceil(bytes / block.length));

  it('19 MB of random printable text is refused (no rows of numbers)', () => {
    const r = rng(3);
    const alphabet = 'abcdefghijklmnopqrstuvwxyz ABCDEFG0123456789.,;-\t';
    const lines: string[] = [];
    for (let n = 0; n < 1024 * 1024; n += 81) {
      let l = '';
      for (let k = 0; k < 80; k++) l += alphabet[(r() * alphabet.length) | 0];
      lines.push(l);
    }
    const text = repeatTo(lines.join('\n') + '\n', 19 * 1024 * 1024);
    expect(text.length).toBeGreaterThan(19e6);
    expect(outcome(() => readSpectrum(text, 'noise.txt')).code).toBe('NO_DATA_ROWS');
  });
  it('19 MB of random number pairs is read as a table and refused for its unordered x', () => {
    const r = rng(4);
    const lines: string[] = [];
    for (let n = 0; n < 1024 * 1024;) {
      const l = `${(400 + r() * 3600).toFixed(4)},${r().toFixed(6)}`;
      lines.push(l);
      n += l.length + 1;
    }
    const text = 'cm-1,A\n' + repeatTo(lines.join('\n') + '\n', 19 * 1024 * 1024);
    expect(outcome(() => readSpectrum(text, 'noise.csv')).code).toBe('NON_MONOTONIC_X');
  });
});

describe('mutated files never crash (seeded random damage to the controls)', () => {
  const controls = ['controls/control-difdup.jdx', 'controls/control-affn.jdx', 'controls/control-percent-t.csv'];
  const alphabet = '0123456789+-.,;#=$%@ABCDEFGHIJKLMNOPQRSTUVWXYZabcdefghijklmnopqrstuvwxyz?!\n\t ';
  it.each(controls)('%s: 400 single-character edits, deletions and truncations', (name) => {
    const original = readFileSync(path.join(dir, name), 'utf8');
    const r = rng(name.length * 7919);
    const crashes: string[] = [];
    for (let k = 0; k < 400; k++) {
      const pos = (r() * original.length) | 0;
      const op = k % 3;
      const text =
        op === 0
          ? original.slice(0, pos) + alphabet[(r() * alphabet.length) | 0] + original.slice(pos + 1)
          : op === 1
            ? original.slice(0, pos) + original.slice(pos + 1 + ((r() * 20) | 0))
            : original.slice(0, pos);
      const o = outcome(() => readSpectrum(text, path.basename(name)));
      if (o.code.startsWith('CRASH')) crashes.push(`${k}@${pos}: ${o.code}`);
    }
    expect(crashes).toEqual([]);
  });
});
