/**
 * The strict JCAMP-DX reader (server/spectra/jcamp*.ts) against real files and an
 * independent reader.
 *
 * Sources:
 * - Files: ../shared/reference-data/jcamp (see its README: readJDX and jcampconverter
 *   test data, byte-for-byte copies).
 * - Reference decoder: jcampconverter@10.0.2 (MIT), a dev dependency used only here.
 *   It computes x as FIRSTX + i * DELTAX and converts NMR x from Hz to ppm, so x is
 *   compared after the same affine map where needed; y is compared exactly.
 * - Format rules: JCAMP-DX, McDonald & Wilks, Appl. Spectrosc. 42 (1988) 151
 *   (ASDF pseudo-digits, Y-value check at DIF line joins, FIRSTX/LASTX/NPOINTS).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { convert } from 'jcampconverter';
import { describe, expect, it } from 'vitest';
import { decodeJcamp, readSpectrum, SpectrumError } from '../../server/spectra';
import { decodeAsdf } from '../../server/spectra/jcamp-asdf';
import { parseJcampStructure } from '../../server/spectra/jcamp-ldr';

const jcampDir = path.resolve(__dirname, '../..', '../shared/reference-data/jcamp');
const text = (name: string) => readFileSync(path.join(jcampDir, name), 'latin1');
const header = (t: string, label: string) => Number(new RegExp(`^##${label}=\\s*([^$\\r\\n]+)`, 'm').exec(t)![1]);

function reference(t: string) {
  return convert(t).flatten[0].spectra;
}

function errorOf(f: () => unknown): SpectrumError {
  try {
    f();
  } catch (e) {
    if (e instanceof SpectrumError) return e;
    throw e;
  }
  throw new Error('expected a SpectrumError, got none');
}

function maxAbsDiff(a: ArrayLike<number>, b: ArrayLike<number>): number {
  expect(a.length).toBe(b.length);
  let m = 0;
  for (let i = 0; i < a.length; i++) m = Math.max(m, Math.abs(a[i] - b[i]));
  return m;
}

const FORMS = ['jcamp-fix.dx', 'jcamp-packed.dx', 'jcamp-squeezed.dx', 'jcamp-difdup.dx'];

describe('compression forms: one spectrum written as AFFN (fix), PAC, SQZ and DIF/DUP', () => {
  const decoded = FORMS.map((f) => decodeJcamp(text(`compression-forms/${f}`)));

  it('all four decode to identical arrays of ##NPOINTS points', () => {
    const npoints = header(text('compression-forms/jcamp-fix.dx'), 'NPOINTS');
    expect(npoints).toBe(16384);
    for (const d of decoded) {
      expect(d.issues).toEqual([]);
      expect(d.pages).toHaveLength(1);
      expect(d.pages[0].y.length).toBe(npoints);
      expect(Array.from(d.pages[0].y)).toEqual(Array.from(decoded[0].pages[0].y));
      expect(Array.from(d.pages[0].x)).toEqual(Array.from(decoded[0].pages[0].x));
    }
    // First and last abscissa are the header's ##FIRSTX / ##LASTX (in Hz, as written).
    expect(decoded[0].pages[0].x[0]).toBe(5592.84116331095);
    expect(decoded[0].pages[0].x[16383]).toBeCloseTo(0, 9);
  });

  it.each(FORMS)('%s equals jcampconverter@10.0.2 (y exactly, x after its Hz -> ppm map)', (f) => {
    const t = text(`compression-forms/${f}`);
    const ours = decodeJcamp(t).pages[0];
    const ref = reference(t)[0];
    expect(Array.from(ours.y)).toEqual(Array.from(ref.data.y));
    // jcampconverter: ppm = Hz / observeFrequency, then shifted so that x[0] equals the file's $OFFSET.
    const of = ref.observeFrequency as number;
    const shift = ours.x[0] / of - ref.data.x[0];
    expect(ref.data.x[0]).toBeCloseTo(ref.shiftOffsetVal as number, 9);
    expect(
      maxAbsDiff(
        Array.from(ours.x, (v) => v / of - shift),
        ref.data.x,
      ),
    ).toBeLessThan(1e-9);
  });

  it('readSpectrum refuses them: they are NMR spectra (##DATA TYPE= NMR Spectrum)', () => {
    for (const f of FORMS) {
      const e = errorOf(() => readSpectrum(text(`compression-forms/${f}`), f));
      expect(e.code).toBe('JCAMP_NOT_IR');
      expect(e.message).toMatch(/NMR Spectrum/);
    }
  });
});

describe('SBO.jdx: IR, AFFN (X++(Y..Y)), transmittance 0-1', () => {
  const t = text('SBO.jdx');

  it('decodes ##NPOINTS points from ##FIRSTX to ##LASTX, equal to jcampconverter', () => {
    const d = decodeJcamp(t);
    const p = d.pages[0];
    expect(d.dataType).toBe('INFRARED SPECTRUM');
    expect(p.y.length).toBe(header(t, 'NPOINTS'));
    expect(p.x[0]).toBe(header(t, 'FIRSTX'));
    expect(p.x[p.x.length - 1]).toBeCloseTo(header(t, 'LASTX'), 9);
    expect(p.y[0]).toBeCloseTo(header(t, 'FIRSTY'), 6);
    const ref = reference(t)[0].data;
    expect(Array.from(p.y)).toEqual(Array.from(ref.y));
    expect(maxAbsDiff(p.x, ref.x)).toBeLessThan(1e-6);
  });

  it('readSpectrum: ascending cm-1 from FIRSTX to LASTX, A = -log10 T of the decoded values', () => {
    const s = readSpectrum(new Uint8Array(readFileSync(path.join(jcampDir, 'SBO.jdx'))), 'SBO.jdx');
    const ref = reference(t)[0].data;
    expect(s.meta.points).toBe(1868);
    expect(s.meta.format).toBe('jcamp-dx');
    expect(s.meta.originalXUnits).toBe('1/CM');
    expect(s.meta.originalYUnits).toBe('TRANSMITTANCE');
    expect(s.meta.yKind).toBe('absorbance');
    expect(s.x[0]).toBe(399.212341);
    expect(s.x[s.x.length - 1]).toBeCloseTo(3999.837646, 9);
    for (let i = 1; i < s.x.length; i++) expect(s.x[i]).toBeGreaterThan(s.x[i - 1]);
    expect(
      maxAbsDiff(
        s.y,
        ref.y.map((v: number) => -Math.log10(v)),
      ),
    ).toBeLessThan(1e-12);
    // ##MAXY=1.059585: above 100 % T, tolerated with a warning (see units.ts).
    expect(s.meta.warnings.join(' ')).toMatch(/105\.9/);
  });
});

describe('PCRF.jdx and PCRF_line265.jdx: NTUPLES, SQZ/DIF/DUP, real + imaginary pages', () => {
  it('PCRF.jdx decodes both pages, equal to jcampconverter', () => {
    const t = text('PCRF.jdx');
    const d = decodeJcamp(t);
    const ref = reference(t);
    expect(d.pages).toHaveLength(2);
    d.pages.forEach((p, k) => {
      expect(p.y.length).toBe(7014);
      expect(Array.from(p.y)).toEqual(Array.from(ref[k].data.y));
      expect(maxAbsDiff(p.x, ref[k].data.x)).toBeLessThan(1e-9);
    });
    expect(d.pages[0].varNames).toEqual(['FREQUENCY', 'SPECTRUM/REAL']);
  });

  it('PCRF_line265.jdx (one N changed to G on line 265) is refused by the Y check', () => {
    const e = errorOf(() => decodeJcamp(text('PCRF_line265.jdx')));
    expect(e.code).toBe('JCAMP_Y_CHECK');
    // The damaged line is 265; the check fails where line 266 repeats its last value.
    expect(e.details).toMatchObject({ line: 266, previousLine: 265 });
  });

  it('jcampconverter accepts the damaged file silently; our report mode sees the same numbers and one failure', () => {
    const bad = text('PCRF_line265.jdx');
    const good = text('PCRF.jdx');
    const refBad = reference(bad)[0].data.y;
    const refGood = reference(good)[0].data.y;
    expect(maxAbsDiff(refBad, refGood)).toBeGreaterThan(0); // the corruption changes values ...
    const ours = decodeJcamp(bad, { checks: 'report' });
    expect(ours.issues.map((i) => i.code)).toEqual(['JCAMP_Y_CHECK']);
    expect(Array.from(ours.pages[0].y)).toEqual(Array.from(refBad)); // ... which jcampconverter returns as data
  });

  it('readSpectrum refuses both as not infrared (##DATA TYPE= NMR SPECTRUM)', () => {
    for (const f of ['PCRF.jdx', 'PCRF_line265.jdx'])
      expect(errorOf(() => readSpectrum(text(f), f)).code).toBe('JCAMP_NOT_IR');
  });
});

describe('MiniDIFDUP.JDX: header inconsistent with its data', () => {
  const t = text('MiniDIFDUP.JDX');
  const firstX = header(t, 'FIRSTX');
  const lastX = header(t, 'LASTX');
  const deltaX = header(t, 'DELTAX');
  const npoints = header(t, 'NPOINTS');

  it('the header contradicts itself: FIRSTX + (NPOINTS-1) * DELTAX misses LASTX by 7.7 cm-1', () => {
    const end = firstX + (npoints - 1) * deltaX;
    expect(Math.abs(end - lastX)).toBeGreaterThan(7.5);
    expect(Math.abs(end - lastX)).toBeLessThan(8);
  });

  it('the data lines follow DELTAX, so the spacing from LASTX puts them up to ~8 cm-1 off', () => {
    const s = parseJcampStructure(t);
    const xy = s.blocks[0].ldrs.find((l) => l.key === 'XYDATA')!;
    const r = decodeAsdf(s.lines, xy.contStart, xy.contCount, { maxPoints: 10_000 });
    expect(r.y.length).toBe(npoints);
    const xFactor = header(t, 'XFACTOR');
    const fromLastX = (lastX - firstX) / (npoints - 1);
    let worstDelta = 0;
    let worstLast = 0;
    for (const ln of r.lines) {
      worstDelta = Math.max(worstDelta, Math.abs(ln.x * xFactor - (firstX + ln.start * deltaX)));
      worstLast = Math.max(worstLast, Math.abs(ln.x * xFactor - (firstX + ln.start * fromLastX)));
    }
    expect(worstDelta).toBeLessThan(0.01);
    expect(worstLast).toBeGreaterThan(7);
    expect(worstLast).toBeLessThan(8);
  });

  it('is REFUSED by the X check (JCAMP_X_CHECK): the file does not say which of LASTX or DELTAX is right, so no x axis can be trusted', () => {
    // Refused rather than flagged: every x of the spectrum depends on the spacing,
    // and an identity test on an axis that may be 8 cm-1 off cannot be relied on.
    const e = errorOf(() => decodeJcamp(t));
    expect(e.code).toBe('JCAMP_X_CHECK');
    expect((e.details as { dev: number }).dev).toBeGreaterThan(7);
    expect(errorOf(() => readSpectrum(t, 'MiniDIFDUP.JDX')).code).toBe('JCAMP_X_CHECK');
  });

  it('its DIF/DUP ordinates themselves decode equal to jcampconverter (report mode)', () => {
    const d = decodeJcamp(t, { checks: 'report' });
    expect(d.issues.map((i) => i.code)).toEqual(['JCAMP_X_CHECK', 'JCAMP_X_CHECK']);
    expect(Array.from(d.pages[0].y)).toEqual(Array.from(reference(t)[0].data.y));
  });
});

describe('every valid JCAMP-DX file in the reference data equals jcampconverter', () => {
  // Valid = passes our checks. Refused, with the reason tested above:
  // MiniDIFDUP.JDX (X check) and PCRF_line265.jdx (Y check).
  const valid = ['SBO.jdx', 'PCRF.jdx', ...FORMS.map((f) => `compression-forms/${f}`)];
  it.each(valid)('%s', (f) => {
    const t = text(f);
    const d = decodeJcamp(t);
    const ref = reference(t);
    expect(d.issues).toEqual([]);
    expect(d.pages.length).toBe(ref.length);
    d.pages.forEach((p, k) => expect(Array.from(p.y)).toEqual(Array.from(ref[k].data.y)));
  });
});

describe('ASDF pseudo-digits, one line at a time (McDonald & Wilks 1988, ASDF tables)', () => {
  const decode = (...lines: string[]) => decodeAsdf(lines, 0, lines.length, { maxPoints: 1000 });
  it('AFFN with exponents and a leading decimal point', () => {
    expect(Array.from(decode('100 1.5E-3 -2.5e+2 .5 7').y)).toEqual([0.0015, -250, 0.5, 7]);
  });
  it('PAC: signs separate the values', () => {
    expect(Array.from(decode('100+5-3+2').y)).toEqual([5, -3, 2]);
  });
  it('SQZ: @ = 0, A-I = +1..+9, a-i = -1..-9 as first digit ("e" after digits is SQZ, not an exponent)', () => {
    expect(Array.from(decode('100e777A2@3i').y)).toEqual([-5777, 12, 3, -9]);
  });
  it('DIF and DUP: J2 adds 12, T repeats the last difference (two in all), then the Y check', () => {
    const r = decode('100A5J2T', '103C9J');
    expect(Array.from(r.y)).toEqual([15, 27, 39, 40]);
    expect(r.lines.map((l) => [l.start, l.yChecked])).toEqual([
      [0, false],
      [2, true],
    ]);
  });
  it('DUP after an absolute value repeats the value; s = 9, S0 = 10', () => {
    expect(Array.from(decode('100A5T').y)).toEqual([15, 15]);
    expect(decode('100@s').y.length).toBe(9);
    expect(decode('100@S0').y.length).toBe(10);
  });
  it('a line after DIF that does not repeat the last value fails the Y check', () => {
    expect(errorOf(() => decode('100A5J2', '102A8J')).code).toBe('JCAMP_Y_CHECK');
    expect(errorOf(() => decode('100A5J2', '102J1')).code).toBe('JCAMP_Y_CHECK');
  });
  it('? is a missing value; other characters are refused', () => {
    expect(Number.isNaN(decode('100 1 ? 3').y[1])).toBe(true);
    expect(errorOf(() => decode('100 1 & 3')).code).toBe('JCAMP_BAD_CHARACTER');
    expect(errorOf(() => decode('J1 2 3')).code).toBe('JCAMP_UNREADABLE'); // no abscissa
  });
  it('more points than allowed are refused at once', () => {
    expect(errorOf(() => decodeAsdf(['100@s99999999'], 0, 1, { maxPoints: 100 })).code).toBe('JCAMP_NPOINTS_MISMATCH');
  });
});

describe('other JCAMP-DX records (synthetic files written here)', () => {
  const xs = Array.from({ length: 60 }, (_, i) => 4000 - 50 * i);
  const ys = xs.map((x) => Number((0.1 + 0.5 * Math.exp(-(((x - 2900) / 80) ** 2))).toFixed(5)));
  const head = (extra: string[]) => [
    '##TITLE=points',
    '##JCAMP-DX=5.01',
    '##DATA TYPE=INFRARED SPECTRUM',
    '##XUNITS=1/CM',
    '##YUNITS=ABSORBANCE',
    '##XFACTOR=1',
    '##YFACTOR=1',
    ...extra,
  ];

  it('##XYPOINTS=(XY..XY) reads through readSpectrum', () => {
    const t = [
      ...head(['##FIRSTX=4000', '##LASTX=1050', '##NPOINTS=60', '##XYPOINTS=(XY..XY)']),
      ...xs.map((x, i) => `${x}, ${ys[i]}`),
      '##END=',
    ].join('\n');
    const s = readSpectrum(t, 'points.jdx');
    expect(s.meta.points).toBe(60);
    expect(s.x[0]).toBe(1050);
    expect(Array.from(s.y).reverse()).toEqual(ys);
  });
  it('##XYPOINTS whose ##LASTX disagrees with the data fails the X check', () => {
    const t = [
      ...head(['##FIRSTX=4000', '##LASTX=1000', '##NPOINTS=60', '##XYPOINTS=(XY..XY)']),
      ...xs.map((x, i) => `${x}, ${ys[i]}`),
      '##END=',
    ].join('\n');
    expect(errorOf(() => readSpectrum(t, 'points.jdx')).code).toBe('JCAMP_X_CHECK');
  });
  it('##PEAK TABLE decodes as a peak table (refused by readSpectrum, tested in the bad-file corpus)', () => {
    const t = [...head(['##NPOINTS=2', '##PEAK TABLE=(XY..XY)']), '2920,0.6 1730,0.9', '##END='].join('\n');
    const d = decodeJcamp(t);
    expect(d.pages[0].form).toBe('PEAK TABLE');
    expect(Array.from(d.pages[0].x)).toEqual([2920, 1730]);
  });
  it('a link block with two spectra: the decoder reads the first and says so', () => {
    const d = decodeJcamp(readFileSync(path.resolve(__dirname, '../bad-files/two-spectra-link-block.jdx'), 'utf8'));
    expect(d.dataBlockCount).toBe(2);
    expect(d.title).toBe('Drum 1');
    expect(d.warnings.join(' ')).toMatch(/2 blocks with data; only the first/);
  });
  it('labels are matched without spaces, hyphens and case; ##RESOLUTION goes to meta', () => {
    const t = [
      '##TITLE=labels',
      '##JCAMPDX=5.01',
      '##datatype=INFRARED SPECTRUM',
      '##X_UNITS=1/CM',
      '##Y UNITS=ABSORBANCE',
      '##RESOLUTION=4',
      '##FIRST X=4000',
      '##LASTX=1050',
      '##N POINTS=60',
      '##XFACTOR=1',
      '##YFACTOR=1e-5',
      '##XYDATA=(X++(Y..Y))',
      ...Array.from(
        { length: 6 },
        (_, k) =>
          `${xs[k * 10]} ${ys
            .slice(k * 10, k * 10 + 10)
            .map((v) => Math.round(v * 1e5))
            .join(' ')}`,
      ),
      '##END=',
    ].join('\r\n');
    const s = readSpectrum(t, 'labels.jdx');
    expect(s.meta.resolution).toBe(4);
    expect(s.y[s.y.length - 1]).toBeCloseTo(ys[0], 12);
  });
});
