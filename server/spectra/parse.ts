/**
 * readSpectrum: the single entry point that turns an uploaded file into a
 * Spectrum (ascending wavenumber in cm-1, absorbance-like y) or throws a
 * SpectrumError with a stable code and a sentence for the operator.
 *
 * Format detection: text whose first non-blank characters are "##" (or that has
 * a JCAMP-DX labelled data record such as ##TITLE= / ##XYDATA= at the start of a
 * line near the top) is JCAMP-DX; anything else is read as delimited text.
 */
import { assembleSpectrum } from './assemble';
import { decideXUnit, decideYQuantity } from './delimited-units';
import { parseDelimited } from './delimited';
import { SpectrumError } from './errors';
import { fileToText } from './file-text';
import { jcampToRawSpectrum } from './jcamp-spectrum';
import type { Spectrum } from './types';
import type { XUnit, YQuantity } from './units';

export interface ReadOptions {
  /** Units stated by the user at upload; used only when the file itself does not state them. */
  xUnits?: XUnit;
  yUnits?: YQuantity;
}

const JCAMP_EXTENSIONS = /\.(jdx|dx|jcm|jcamp)$/i;
const JCAMP_START = /^\s*##\s*[A-Za-z.$]/;
const JCAMP_RECORD = /^##\s*(TITLE|JCAMP-?DX|XYDATA|XYPOINTS|PEAK ?TABLE|NTUPLES)\s*=/im;

export function isJcampText(text: string): boolean {
  return JCAMP_START.test(text) || JCAMP_RECORD.test(text.slice(0, 65536));
}

export function readSpectrum(data: Uint8Array | string, fileName: string, options: ReadOptions = {}): Spectrum {
  const text = fileToText(data);
  if (text.trim() === '') {
    throw new SpectrumError(
      'EMPTY_FILE',
      'The file is empty. Export the spectrum from the instrument again and upload the new file.',
    );
  }
  if (isJcampText(text)) return assembleSpectrum(jcampToRawSpectrum(text, fileName, options));
  if (JCAMP_EXTENSIONS.test(fileName)) {
    throw new SpectrumError(
      'JCAMP_UNREADABLE',
      'The file is named like a JCAMP-DX file but does not contain JCAMP-DX records (lines starting with ##). Export the spectrum again as JCAMP-DX and upload the new file.',
    );
  }
  return assembleSpectrum(delimitedToRawSpectrum(text, fileName, options));
}

function delimitedToRawSpectrum(text: string, fileName: string, options: ReadOptions) {
  const table = parseDelimited(text);
  const warnings: string[] = [];
  const xd = decideXUnit(table.columnNames?.[0] ?? headerHint(table.headerLines, 'x'), table.x, options.xUnits);
  const yd = decideYQuantity(table.columnNames?.[1] ?? headerHint(table.headerLines, 'y'), table.y, options.yUnits);
  if (xd.inferred) warnings.push(`The file does not state the x units; read as ${xd.unit} (${xd.source}).`);
  if (yd.inferred) warnings.push(`The file does not state the y units; read as ${yd.unit} (${yd.source}).`);
  return {
    x: table.x,
    y: table.y,
    xUnit: xd.unit,
    yQuantity: yd.unit,
    meta: {
      title: table.title || fileName.replace(/\.[^.]*$/, ''),
      fileName,
      format: 'delimited' as const,
      originalXUnits: xd.inferred ? '' : xd.source,
      originalYUnits: yd.inferred ? '' : yd.source,
      warnings,
    },
  };
}

/** When the column-name line does not split cleanly, look for unit words in the last header line. */
function headerHint(headerLines: string[], axis: 'x' | 'y'): string | undefined {
  const last = headerLines.at(-1);
  if (!last) return undefined;
  const tokens = last.split(/[\s,;\t]+/).filter(Boolean);
  if (tokens.length < 2) return undefined;
  return axis === 'x' ? tokens[0] : tokens[tokens.length - 1];
}
