/**
 * Turns uploaded bytes into text, refusing what is not text.
 *
 * - Larger than MAX_FILE_BYTES: refused before anything else is looked at.
 * - Byte-order marks: UTF-8, UTF-16 LE and UTF-16 BE are honoured.
 * - Binary: any NUL byte (without a UTF-16 mark), or more than 1 % control
 *   characters other than tab, line feed, form feed and carriage return.
 * - Text that is not valid UTF-8 is read as Windows-1252 (Latin-1), the usual
 *   encoding of older instrument software (for "µm" or "°C" in a header).
 */
import { MAX_FILE_BYTES, SpectrumError } from './errors';

function tooLarge(size: number): SpectrumError {
  return new SpectrumError(
    'FILE_TOO_LARGE',
    `The file is ${(size / 1024 / 1024).toFixed(1)} MB; a spectrum file is at most ${MAX_FILE_BYTES / 1024 / 1024} MB. Check that you chose the spectrum export and not an image or an archive.`,
    { bytes: size, limit: MAX_FILE_BYTES },
  );
}

function binary(): SpectrumError {
  return new SpectrumError(
    'BINARY_FILE',
    'This is a binary file, not a text export. Export the spectrum from the instrument software as JCAMP-DX (.jdx, .dx) or as CSV text and upload that file.',
  );
}

function controlRatio(s: string): number {
  const n = Math.min(s.length, 1 << 20);
  let bad = 0;
  for (let i = 0; i < n; i++) {
    const c = s.charCodeAt(i);
    if ((c < 32 && c !== 9 && c !== 10 && c !== 12 && c !== 13) || c === 127 || c === 0xfffd) bad++;
  }
  return n === 0 ? 0 : bad / n;
}

/** Decodes a spectrum file to text. Throws FILE_TOO_LARGE or BINARY_FILE. */
export function fileToText(data: Uint8Array | string): string {
  if (typeof data === 'string') {
    if (data.length > MAX_FILE_BYTES) throw tooLarge(data.length);
    if (data.includes('\u0000') || controlRatio(data) > 0.01) throw binary();
    return data.charCodeAt(0) === 0xfeff ? data.slice(1) : data;
  }
  if (data.byteLength > MAX_FILE_BYTES) throw tooLarge(data.byteLength);
  let text: string;
  if (data[0] === 0xff && data[1] === 0xfe) text = new TextDecoder('utf-16le').decode(data.subarray(2));
  else if (data[0] === 0xfe && data[1] === 0xff) text = new TextDecoder('utf-16be').decode(data.subarray(2));
  else {
    if (data.indexOf(0) !== -1) throw binary();
    const body = data[0] === 0xef && data[1] === 0xbb && data[2] === 0xbf ? data.subarray(3) : data;
    try {
      text = new TextDecoder('utf-8', { fatal: true }).decode(body);
    } catch {
      text = new TextDecoder('windows-1252').decode(body);
    }
  }
  if (text.includes('\u0000') || controlRatio(text) > 0.01) throw binary();
  return text;
}
