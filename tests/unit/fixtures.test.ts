/**
 * The demo spectra generator (fixtures/generate.ts) is deterministic: two runs
 * give the same bytes, equal to the files checked in under fixtures/spectra.
 * Every file is labelled as synthetic demo data and is valid input for the
 * engine's reader; the JCAMP-DX files also decode identically with
 * jcampconverter@10.0.2 (MIT), the independent reference decoder of the project.
 */
import { mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import path from 'node:path';
import { convert } from 'jcampconverter';
import { afterAll, describe, expect, it } from 'vitest';
import { demoSpectra } from '../../fixtures/catalogue';
import { SPECTRA_DIR, generateAll } from '../../fixtures/generate';
import { NPOINTS, SYNTHETIC_LABEL } from '../../fixtures/synth';
import { readSpectrum, sameAcquisition } from '../../server/spectra/index';

function listFiles(dir: string, base = ''): string[] {
  const out: string[] = [];
  for (const e of readdirSync(path.join(dir, base), { withFileTypes: true })) {
    const rel = base ? `${base}/${e.name}` : e.name;
    if (e.isDirectory()) out.push(...listFiles(dir, rel));
    else out.push(rel);
  }
  return out.sort();
}

const tmp: string[] = [];
afterAll(() => {
  for (const d of tmp) rmSync(d, { recursive: true, force: true });
});

function generateInto(): string {
  const dir = mkdtempSync(path.join(tmpdir(), 'drumline-fixtures-'));
  tmp.push(dir);
  generateAll(dir);
  return dir;
}

describe('demo spectra generator', () => {
  const a = generateInto();
  const b = generateInto();
  const files = listFiles(a);

  it('writes every catalogue file and nothing else', () => {
    expect(files).toEqual(
      demoSpectra()
        .map((s) => s.path)
        .sort(),
    );
    expect(files.length).toBeGreaterThan(50);
  });

  it('gives the same bytes twice', () => {
    expect(listFiles(b)).toEqual(files);
    for (const f of files) expect(readFileSync(path.join(b, f)).equals(readFileSync(path.join(a, f))), f).toBe(true);
  });

  it('equals the files checked in under fixtures/spectra (run `npm run fixtures` after changing the band lists)', () => {
    expect(listFiles(SPECTRA_DIR)).toEqual(files);
    for (const f of files)
      expect(readFileSync(path.join(SPECTRA_DIR, f)).equals(readFileSync(path.join(a, f))), f).toBe(true);
  });

  it('keeps the checked-in output small (under 1.5 MB)', () => {
    const total = files.reduce((s, f) => s + readFileSync(path.join(a, f)).length, 0);
    expect(total).toBeLessThan(1.5 * 1024 * 1024);
  });

  it('labels every file as synthetic demo data', () => {
    for (const f of files) {
      const text = readFileSync(path.join(a, f), 'utf8');
      expect(text, f).toContain(SYNTHETIC_LABEL);
      if (f.endsWith('.jdx')) {
        expect(text).toMatch(/^##TITLE=.+synthetic demo data\n##JCAMP-DX=5\.01\n##DATA TYPE=INFRARED SPECTRUM\n/);
        expect(text).toContain(`##$SYNTHETIC=${SYNTHETIC_LABEL}`);
        for (const label of [
          '##ORIGIN=',
          '##OWNER=',
          '##XUNITS=1/CM',
          '##YUNITS=ABSORBANCE',
          '##XFACTOR=',
          '##YFACTOR=',
          '##FIRSTX=4000',
          '##LASTX=650',
          `##NPOINTS=${NPOINTS}`,
          '##XYDATA=(X++(Y..Y))',
          '##END=',
        ]) {
          expect(text, `${f} ${label}`).toContain(label);
        }
      }
    }
  });

  it('every file reads with the engine (4000-650 cm-1, 2 cm-1 steps, absorbance)', () => {
    for (const f of files) {
      const s = readSpectrum(readFileSync(path.join(a, f)), path.basename(f));
      expect(s.x.length, f).toBe(NPOINTS);
      expect(s.x[0]).toBe(650);
      expect(s.x[s.x.length - 1]).toBe(4000);
      expect(s.meta.yKind).toBe('absorbance');
      expect(s.meta.title).toContain('synthetic demo data');
    }
  });

  it('JCAMP-DX files decode the same with jcampconverter@10.0.2 (independent reader)', () => {
    for (const f of files.filter((x) => x.endsWith('.jdx'))) {
      const text = readFileSync(path.join(a, f), 'utf8');
      const ref = convert(text).flatten[0].spectra[0].data;
      const ours = readSpectrum(text, path.basename(f));
      // Our reader returns ascending x; the file (and jcampconverter) run 4000 -> 650.
      const y = Array.from(ours.y).reverse();
      expect(ref.y.length).toBe(y.length);
      let worst = 0;
      for (let i = 0; i < y.length; i++) worst = Math.max(worst, Math.abs(y[i] - ref.y[i]));
      expect(worst, f).toBeLessThan(1e-9);
      expect(ref.x[0]).toBe(4000);
      expect(ref.x[ref.x.length - 1]).toBe(650);
    }
  });

  it('the semicolon CSV files (percent transmittance, decimal comma) read back to the absorbance that was written', () => {
    const csv = files.filter((x) => x.endsWith('.csv'));
    expect(csv.length).toBeGreaterThan(0);
    for (const f of csv) {
      const lines = readFileSync(path.join(a, f), 'utf8').trim().split('\n');
      expect(lines[2]).toBe('cm-1;%T');
      const s = readSpectrum(readFileSync(path.join(a, f)), path.basename(f));
      const [x0, t0] = lines[3].split(';');
      expect(Number(x0)).toBe(4000);
      // A = -log10(T / 100) (Ph. Eur. 2.2.24).
      expect(s.y[s.y.length - 1]).toBeCloseTo(-Math.log10(Number(t0.replace(',', '.')) / 100), 9);
    }
  });
});

describe('every demo file is a distinct acquisition (docs/provenance.md)', () => {
  it("no two demo spectra are the same acquisition by the engine's copy rule", () => {
    const files = listFiles(SPECTRA_DIR).filter((f) => /\.(jdx|csv)$/i.test(f));
    const spectra = files.map((f) => ({ f, s: readSpectrum(readFileSync(path.join(SPECTRA_DIR, f)), f) }));
    expect(spectra.length).toBeGreaterThan(20);
    const copies: string[] = [];
    for (let i = 0; i < spectra.length; i++)
      for (let j = i + 1; j < spectra.length; j++)
        if (sameAcquisition(spectra[i].s, spectra[j].s).copy) copies.push(`${spectra[i].f} = ${spectra[j].f}`);
    expect(copies).toEqual([]);
  });
});
