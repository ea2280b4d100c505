/**
 * Bytes to text (server/spectra/file-text.ts): byte-order marks, Latin-1
 * fallback, binary detection, size limit. Encodings per the Unicode standard
 * (BOMs EF BB BF, FF FE, FE FF) and Windows-1252 for "µ" (0xB5) - from memory.
 */
import { describe, expect, it } from 'vitest';
import { MAX_FILE_BYTES, readSpectrum, SpectrumError } from '../../server/spectra';
import { fileToText } from '../../server/spectra/file-text';

const codeOf = (f: () => unknown) => {
  try {
    f();
  } catch (e) {
    if (e instanceof SpectrumError) return e.code;
    throw e;
  }
  return 'no error';
};

// A small %T spectrum with a micrometre header, 2.5-12.4 um.
const body =
  'wavelength (µm);%T\n' +
  Array.from({ length: 100 }, (_, i) =>
    `${(2.5 + 0.1 * i).toFixed(1).replace('.', ',')};${50 + i / 10}`.replace(/;(\d+)\.(\d)/, ';$1,$2'),
  ).join('\n');

function utf16(text: string, bigEndian: boolean): Uint8Array {
  const out = new Uint8Array(2 + text.length * 2);
  out.set(bigEndian ? [0xfe, 0xff] : [0xff, 0xfe]);
  for (let i = 0; i < text.length; i++) {
    const c = text.charCodeAt(i);
    out[2 + 2 * i + (bigEndian ? 1 : 0)] = c & 0xff;
    out[2 + 2 * i + (bigEndian ? 0 : 1)] = c >> 8;
  }
  return out;
}

describe('text encodings', () => {
  const expected = readSpectrum(body, 'um.csv');
  it('reads the µm header (1e4 / um) and decimal commas', () => {
    expect(expected.x[expected.x.length - 1]).toBeCloseTo(4000, 9);
    expect(expected.meta.originalXUnits).toBe('wavelength (µm)');
  });
  it.each([
    ['UTF-8', new TextEncoder().encode(body)],
    ['UTF-8 with BOM', Uint8Array.from([0xef, 0xbb, 0xbf, ...new TextEncoder().encode(body)])],
    ['UTF-16 LE with BOM', utf16(body, false)],
    ['UTF-16 BE with BOM', utf16(body, true)],
    ['Windows-1252 (µ as 0xB5)', Uint8Array.from(Array.from(body, (c) => c.charCodeAt(0)))],
  ])('%s gives the same spectrum', (_name, bytes) => {
    const s = readSpectrum(bytes, 'um.csv');
    expect(Array.from(s.y)).toEqual(Array.from(expected.y));
    expect(s.meta.originalXUnits).toBe('wavelength (µm)');
  });
});

describe('binary and size', () => {
  it('UTF-16 without a BOM has NUL bytes and is refused as binary', () => {
    expect(codeOf(() => fileToText(utf16(body, false).subarray(2)))).toBe('BINARY_FILE');
  });
  it('a string with control characters is refused as binary', () => {
    expect(codeOf(() => fileToText('1,2\n' + '\u0001\u0002\u0003'.repeat(50)))).toBe('BINARY_FILE');
  });
  it('exactly the limit is accepted as text, one byte more is refused', () => {
    const atLimit = new Uint8Array(MAX_FILE_BYTES).fill(0x20);
    expect(fileToText(atLimit).length).toBe(MAX_FILE_BYTES);
    expect(codeOf(() => fileToText(new Uint8Array(MAX_FILE_BYTES + 1).fill(0x20)))).toBe('FILE_TOO_LARGE');
  });
});
