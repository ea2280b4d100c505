/**
 * Drumline's JCAMP-DX 4.24 writer (issue 13 item 6): a spectrum read from a real raw file
 * (../shared/reference-data: a delimited ATR fibre spectrum, an NIR file and JCAMP-DX files of
 * another origin) is written as AFFN (X++(Y..Y)) and read back by Drumline's own strict reader and
 * by the MIT-licensed jcampconverter 10.0.2 (test reference only): both give the y values written
 * (to the last bit or two of a double: 1e-12 relative), point for point, and the same even x axis, which lies within the raw file's rounding
 * of its x values; the metadata labels survive. Format source: JCAMP-DX 4.24 (McDonald and
 * Wilks, Applied Spectroscopy 42 (1988) 151), labels and (XY..XY) form.
 */
import fs from 'node:fs';
import path from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { convert } from 'jcampconverter';
import { readSpectrum } from '../../server/spectra';
import { affn, writeJcamp } from '../../server/modules/archive/jcamp-writer';

const DATA = path.resolve(__dirname, '../../../shared/reference-data');
const files = fs.existsSync(DATA)
  ? [
      'atr-ftir-fibres/nylon66_s091_r2.csv',
      'atr-ftir/polystyrene_film.csv',
      ...fs
        .readdirSync(path.join(DATA, 'jcamp'))
        .filter((f) => /\.(jdx|dx)$/i.test(f))
        .slice(0, 4)
        .map((f) => `jcamp/${f}`),
    ]
  : [];

const meta = {
  title: 'Container L-2026-00042-001 ## injected\r\n##END=',
  origin: 'Lindenhall Pharma (demo)',
  owner: 'Lindenhall Pharma (demo)',
  measuredAt: new Date('2026-12-02T09:15:30.250Z'),
  instrument: 'FTIR-1 (ATR diamond)',
  sampling: 'ATR',
  drumline: { 'measurement id': 42, 'raw file sha256': 'ab'.repeat(32), verdict: 'pass' },
};

let written = 0;

function maxRelDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  expect(a.length).toBe(b.length);
  let worst = 0;
  for (let i = 0; i < a.length; i++) worst = Math.max(worst, Math.abs(a[i] - b[i]) / Math.max(Math.abs(b[i]), 1e-300));
  return worst;
}

describe('AFFN numbers without exponent', () => {
  it.each([1.5e-7, -1.0423066319067168e-7, 2.5e21, 1e21, 123.456, 5e-324])('%s reads back to the same double', (v) => {
    const t = affn(v);
    expect(t).not.toMatch(/e/i);
    expect(Number(t)).toBe(v);
  });
});

describe('JCAMP-DX writer: read back identically by two readers', () => {
  it('has real files to work on', () => {
    expect(files.length).toBeGreaterThanOrEqual(3);
  });
  afterAll(() => {
    expect(written, 'spectra written and read back').toBeGreaterThanOrEqual(3);
  });

  it.each(files)('%s', (rel) => {
    let s;
    try {
      s = readSpectrum(fs.readFileSync(path.join(DATA, rel)), path.basename(rel));
    } catch {
      return; // a file Drumline refuses (not an IR spectrum) has nothing to write
    }
    const text = writeJcamp(s, meta);
    expect(text.startsWith('##TITLE=')).toBe(true);
    expect(text).toContain('##JCAMP-DX=4.24');
    // The title's line break and "##" cannot start a label of their own.
    expect(text.match(/^##END=/gm)).toHaveLength(1);

    written++;
    const ours = readSpectrum(text, 'copy.jdx');
    expect(ours.x.length).toBe(s.x.length);
    // Both readers build each number from its digits, which can differ from the nearest double in
    // the last bit: the same value to 1e-12 relative, far below any instrument's noise.
    expect(maxRelDiff(ours.y, s.y)).toBeLessThan(1e-12);
    expect(ours.meta.yKind).toBe(s.meta.yKind);
    const step = Math.abs(s.x[1] - s.x[0]);
    let worst = 0;
    for (let i = 0; i < s.x.length; i++) worst = Math.max(worst, Math.abs(ours.x[i] - s.x[i]));
    expect(worst).toBeLessThan(step * 0.01);

    const ref = convert(text, { keepRecordsRegExp: /DRUMLINE/ }).flatten[0];
    const d = ref.spectra[0].data as { x: number[]; y: number[] };
    expect(maxRelDiff(d.y, s.y)).toBeLessThan(1e-12); // the reference reader parses digits its own way too
    expect(d.x).toHaveLength(s.x.length);
    for (let i = 0; i < d.x.length; i++) expect(Math.abs(d.x[i] - ours.x[i])).toBeLessThan(1e-9 * Math.abs(ours.x[i]));
    expect(ref.meta).toMatchObject({ 'DRUMLINE MEASUREMENT ID': 42, 'DRUMLINE VERDICT': 'pass' });
    expect(text).toContain('##$DRUMLINE RAW FILE SHA256=' + 'ab'.repeat(32));
    expect(text).toContain('##LONGDATE=2026/12/02 09:15:30 +0000');
  });
});
