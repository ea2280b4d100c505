/**
 * Unit conversion (server/spectra/units.ts).
 * Sources: the definitions of wavenumber (1/wavelength: cm-1 = 1e7 / nm = 1e4 / um)
 * and of absorbance (A = -log10 T, Beer-Lambert; A = 1 at 10 % T), as in any
 * spectroscopy textbook (from memory); log(1/R) for diffuse reflectance is common
 * practice in NIR.
 */
import { describe, expect, it } from 'vitest';
import { SpectrumError } from '../../server/spectra';
import {
  checkWavenumberWindow,
  nmToWavenumber,
  parseXUnitLabel,
  parseYUnitLabel,
  toAbsorbanceLike,
  toWavenumber,
  transmittanceToAbsorbance,
  umToWavenumber,
  type YQuantity,
} from '../../server/spectra/units';

const codeOf = (f: () => unknown) => {
  try {
    f();
  } catch (e) {
    if (e instanceof SpectrumError) return e.code;
    throw e;
  }
  return 'no error';
};
const arr = (...v: number[]) => Float64Array.from(v);

describe('x conversion', () => {
  it('2500 nm = 4000 cm-1 and 1000 nm = 10000 cm-1 (cm-1 = 1e7 / nm)', () => {
    expect(nmToWavenumber(2500)).toBe(4000);
    expect(nmToWavenumber(1000)).toBe(10000);
    expect(Array.from(toWavenumber(arr(2500, 1000), 'nm'))).toEqual([4000, 10000]);
  });
  it('2.5 um = 4000 cm-1 and 25 um = 400 cm-1 (cm-1 = 1e4 / um)', () => {
    expect(umToWavenumber(2.5)).toBe(4000);
    expect(umToWavenumber(25)).toBe(400);
  });
  it('refuses x values that are not infrared in the stated unit', () => {
    // micrometre values labelled cm-1
    expect(codeOf(() => checkWavenumberWindow(arr(2.5, 25), 'cm-1', 2.5, 25))).toBe('X_UNITS_MISMATCH');
    // cm-1 values labelled nm: 400-4000 "nm" would be 2500-25000 cm-1, mostly visible/UV ... accepted only up to 26000
    expect(codeOf(() => checkWavenumberWindow(toWavenumber(arr(200, 4000), 'nm'), 'nm', 200, 4000))).toBe(
      'X_UNITS_MISMATCH',
    );
    expect(codeOf(() => checkWavenumberWindow(arr(400, 4000), 'cm-1', 400, 4000))).toBe('no error');
  });
});

describe('y conversion', () => {
  it('T = 10 % gives A = 1, T = 1 % gives A = 2, T = 100 % gives A = 0', () => {
    const r = toAbsorbanceLike(arr(10, 1, 100), 'transmittance-percent', []);
    expect(r.yKind).toBe('absorbance');
    expect(r.y[0]).toBeCloseTo(1, 15);
    expect(r.y[1]).toBeCloseTo(2, 15);
    expect(r.y[2]).toBe(0);
  });
  it('T = 0.1 as a fraction gives A = 1', () => {
    expect(toAbsorbanceLike(arr(0.1), 'transmittance-fraction', []).y[0]).toBeCloseTo(1, 15);
    expect(transmittanceToAbsorbance(0.1)).toBeCloseTo(1, 15);
  });
  it('transmittance of unstated scale: max <= 1.1 is a fraction, above is percent', () => {
    expect(toAbsorbanceLike(arr(0.1, 1.05), 'transmittance', []).quantity).toBe('transmittance-fraction');
    expect(toAbsorbanceLike(arr(10, 95), 'transmittance', []).quantity).toBe('transmittance-percent');
    expect(toAbsorbanceLike(arr(10, 95), 'transmittance', []).y[0]).toBeCloseTo(1, 15);
  });
  it('reflectance R = 1 % gives log(1/R) = 2; Kubelka-Munk and log(1/R) are kept', () => {
    const r = toAbsorbanceLike(arr(1), 'reflectance-percent', []);
    expect(r.yKind).toBe('log-inverse-reflectance');
    expect(r.y[0]).toBeCloseTo(2, 15);
    expect(toAbsorbanceLike(arr(0.5), 'kubelka-munk', []).yKind).toBe('kubelka-munk');
    expect(toAbsorbanceLike(arr(0.5), 'log-inverse-reflectance', []).y[0]).toBe(0.5);
  });
  it('transmittance up to 110 % is kept with a warning; above is refused; zero or below is refused', () => {
    const w: string[] = [];
    const r = toAbsorbanceLike(arr(50, 104), 'transmittance-percent', w);
    expect(r.y[1]).toBeCloseTo(-Math.log10(1.04), 15);
    expect(w.join(' ')).toMatch(/104 %/);
    expect(codeOf(() => toAbsorbanceLike(arr(50, 150), 'transmittance-percent', []))).toBe('TRANSMITTANCE_RANGE');
    expect(codeOf(() => toAbsorbanceLike(arr(50, 0), 'transmittance-percent', []))).toBe('NON_POSITIVE_TRANSMITTANCE');
    expect(codeOf(() => toAbsorbanceLike(arr(0.5, -0.01), 'transmittance-fraction', []))).toBe(
      'NON_POSITIVE_TRANSMITTANCE',
    );
    expect(codeOf(() => toAbsorbanceLike(arr(50, 120), 'reflectance-percent', []))).toBe('REFLECTANCE_RANGE');
  });
});

describe('unit labels (JCAMP-DX ##XUNITS/##YUNITS values and common column headers)', () => {
  const x: [string, string | null][] = [
    ['1/CM', 'cm-1'],
    ['cm-1', 'cm-1'],
    ['Wavenumber (cm⁻¹)', 'cm-1'],
    ['wavenumber_cm-1', 'cm-1'],
    ['CM^-1', 'cm-1'],
    ['NANOMETERS', 'nm'],
    ['Wavelength (nm)', 'nm'],
    ['MICROMETERS', 'um'],
    ['µm', 'um'],
    ['microns', 'um'],
    ['HZ', null],
    ['PPM', null],
    ['ARBITRARY UNITS', null],
  ];
  it.each(x)('x "%s" -> %s', (label, unit) => expect(parseXUnitLabel(label)).toBe(unit));
  const y: [string, YQuantity | null][] = [
    ['ABSORBANCE', 'absorbance'],
    ['A', 'absorbance'],
    ['Abs', 'absorbance'],
    ['absorbance', 'absorbance'],
    ['TRANSMITTANCE', 'transmittance'],
    ['T', 'transmittance'],
    ['%T', 'transmittance-percent'],
    ['Transmittance [%]', 'transmittance-percent'],
    ['REFLECTANCE', 'reflectance'],
    ['%R', 'reflectance-percent'],
    ['LOG(1/R)', 'log-inverse-reflectance'],
    ['KUBELKA-MUNK', 'kubelka-munk'],
    ['ARBITRARY UNITS', null],
    ['counts', null],
  ];
  it.each(y)('y "%s" -> %s', (label, q) => expect(parseYUnitLabel(label)).toBe(q));
});
