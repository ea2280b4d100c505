/**
 * Reader for spectra exported as delimited text: CSV, TSV, semicolon-separated or
 * whitespace-separated columns, with an optional header (title lines and / or a
 * column-name line such as "cm-1,%T"), decimal point or decimal comma.
 *
 * This file only turns text into two numeric columns plus the header text. What
 * the columns mean (units) is decided in delimited-units.ts.
 *
 * Layout detection: the last (up to) 20 non-empty lines are tried against each
 * candidate layout below; the layout under which most of them read as rows of at
 * least two numbers wins (ties go to the earlier candidate). So "1234,5;0,123"
 * is semicolon + decimal comma, "1234.5,0.123" is comma + decimal point and
 * "1234,5 0,123" is whitespace + decimal comma. Lines before the first numeric
 * row are header lines; every line after it must be a numeric row of the same
 * width, otherwise the file is refused with the line number.
 */
import { SpectrumError } from './errors';

export interface DelimitedTable {
  x: Float64Array;
  y: Float64Array;
  /** Non-empty lines before the first data row, trimmed. */
  headerLines: string[];
  /** Column names when a header line splits into as many fields as the data rows. */
  columnNames?: [string, string];
  /** First header line that is not the column-name line, if any. */
  title?: string;
  delimiter: 'tab' | 'semicolon' | 'comma' | 'whitespace';
  decimal: '.' | ',';
}

interface Layout {
  delimiter: DelimitedTable['delimiter'];
  decimal: '.' | ',';
}

const LAYOUTS: Layout[] = [
  { delimiter: 'tab', decimal: '.' },
  { delimiter: 'tab', decimal: ',' },
  { delimiter: 'semicolon', decimal: '.' },
  { delimiter: 'semicolon', decimal: ',' },
  { delimiter: 'comma', decimal: '.' },
  { delimiter: 'whitespace', decimal: '.' },
  { delimiter: 'whitespace', decimal: ',' },
];

const DELIMITER_CHAR = { tab: '\t', semicolon: ';', comma: ',' } as const;

const NUMBER = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;
const NON_FINITE_TOKEN =
  /^(?:[+-]?(?:nan|inf|infinity|∞)|#?n\/?a|null|none|#(?:num|div\/0|value|ref)!?|-?1\.#(?:ind|inf|qnan)\d*)$/i;

function splitFields(line: string, layout: Layout): string[] {
  let fields: string[];
  switch (layout.delimiter) {
    case 'tab':
      fields = line.split('\t');
      break;
    case 'semicolon':
      fields = line.split(';');
      break;
    case 'comma':
      fields = line.split(',');
      break;
    case 'whitespace':
      return line.trim().split(/\s+/).map(unquote);
  }
  fields = fields.map((f) => unquote(f.trim()));
  // A delimiter at the end of the line ("1234.5,0.12,") adds no column.
  while (fields.length > 1 && fields[fields.length - 1] === '') fields.pop();
  return fields;
}

function unquote(f: string): string {
  return f.length >= 2 && ((f[0] === '"' && f.at(-1) === '"') || (f[0] === "'" && f.at(-1) === "'"))
    ? f.slice(1, -1).trim()
    : f;
}

/** Parses one field; returns NaN for anything that is not a plain decimal number. */
function toNumber(field: string, decimal: '.' | ','): number {
  const s = decimal === ',' ? field.replace(',', '.') : field;
  return NUMBER.test(s) ? Number(s) : NaN;
}

/** Number of numeric fields of a line under a layout, or 0 when any field is not a number. */
function numericWidth(line: string, layout: Layout): number {
  const fields = splitFields(line, layout);
  for (const f of fields) if (Number.isNaN(toNumber(f, layout.decimal))) return 0;
  return fields.length;
}

function chooseLayout(sample: string[]): { layout: Layout; width: number } | null {
  let best: { layout: Layout; width: number; score: number } | null = null;
  for (const layout of LAYOUTS) {
    let score = 0;
    let width = 0;
    for (const line of sample) {
      const w = numericWidth(line, layout);
      if (w >= 2) {
        score++;
        width = Math.max(width, w);
      }
    }
    if (score > 0 && (!best || score > best.score)) best = { layout, width, score };
  }
  return best && { layout: best.layout, width: best.width };
}

/** Reads a delimited-text spectrum into two columns. Throws SpectrumError on malformed text. */
export function parseDelimited(text: string): DelimitedTable {
  const lines = text.split(/\r\n|\r|\n/);
  const nonEmpty: number[] = [];
  for (let i = 0; i < lines.length; i++) if (lines[i].trim() !== '') nonEmpty.push(i);
  if (nonEmpty.length === 0) {
    throw new SpectrumError(
      'EMPTY_FILE',
      'The file is empty. Export the spectrum from the instrument again and upload the new file.',
    );
  }

  const sample = nonEmpty.slice(-20).map((i) => lines[i]);
  const chosen = chooseLayout(sample);
  if (!chosen) {
    const oneColumn = sample.filter((l) => numericWidth(l, LAYOUTS[5]) === 1).length;
    if (oneColumn > sample.length / 2) {
      throw new SpectrumError(
        'ONE_COLUMN',
        'The file holds only one column of numbers; a spectrum needs two (x and y). Export both columns, for example wavenumber and absorbance, and upload again.',
      );
    }
    throw new SpectrumError(
      'NO_DATA_ROWS',
      'No rows of numbers were found in this file, so it is not a spectrum export. Check that you chose the right file (a JCAMP-DX or CSV spectrum).',
    );
  }
  const { layout, width } = chosen;

  // Header: non-empty lines before the first row that reads as numbers.
  let first = -1;
  for (let k = 0; k < nonEmpty.length; k++) {
    if (numericWidth(lines[nonEmpty[k]], layout) >= 2) {
      first = k;
      break;
    }
  }
  const headerLines = nonEmpty.slice(0, first).map((i) => lines[i].trim());

  const rows = nonEmpty.length - first;
  const fastSep = width === 2 && layout.delimiter !== 'whitespace' ? DELIMITER_CHAR[layout.delimiter] : null;
  const xs = new Float64Array(rows);
  const ys = new Float64Array(rows);
  for (let k = first; k < nonEmpty.length; k++) {
    const lineNo = nonEmpty[k] + 1;
    const line = lines[nonEmpty[k]];
    if (fastSep !== null) {
      // Fast path for the common two-column case: one delimiter, no quotes.
      const d = line.indexOf(fastSep);
      if (d !== -1 && line.indexOf(fastSep, d + 1) === -1) {
        const a = toNumber(line.slice(0, d).trim(), layout.decimal);
        const b = toNumber(line.slice(d + 1).trim(), layout.decimal);
        if (!Number.isNaN(a) && !Number.isNaN(b)) {
          xs[k - first] = a;
          ys[k - first] = b;
          continue;
        }
      }
    }
    const fields = splitFields(line, layout);
    if (fields.length === width) {
      const a = toNumber(fields[0], layout.decimal);
      const b = toNumber(fields[1], layout.decimal);
      if (!Number.isNaN(a) && !Number.isNaN(b) && (width === 2 || allNumeric(fields, layout))) {
        xs[k - first] = a;
        ys[k - first] = b;
        continue;
      }
    }
    throw rowError(fields, width, lineNo, line, layout);
  }

  if (width > 2) {
    throw new SpectrumError(
      'TOO_MANY_COLUMNS',
      `The file has ${width} columns of numbers; Drumline reads one spectrum per file, as two columns (x and y). Export a single spectrum and upload again.`,
      { columns: width },
    );
  }

  let columnNames: [string, string] | undefined;
  let title: string | undefined;
  if (headerLines.length > 0) {
    const last = headerLines[headerLines.length - 1];
    const names = splitHeader(last, layout);
    if (names.length === width) columnNames = [names[0], names[1]];
    const titleLine = columnNames ? headerLines.slice(0, -1)[0] : headerLines[0];
    if (titleLine) title = unquote(titleLine.replace(/[,;\t]+$/, '').trim());
  }
  return { x: xs, y: ys, headerLines, columnNames, title, delimiter: layout.delimiter, decimal: layout.decimal };
}

function allNumeric(fields: string[], layout: Layout): boolean {
  return fields.every((f) => !Number.isNaN(toNumber(f, layout.decimal)));
}

function splitHeader(line: string, layout: Layout): string[] {
  if (layout.delimiter !== 'whitespace')
    return splitFields(line, layout).filter((f, i, a) => f !== '' || i < a.length - 1);
  // Whitespace data: header names may contain single spaces ("Wavenumber (cm-1)").
  const byTab = line
    .split(/\t|\s{2,}/)
    .map((f) => unquote(f.trim()))
    .filter(Boolean);
  return byTab.length >= 2 ? byTab : line.trim().split(/\s+/).map(unquote);
}

function rowError(fields: string[], width: number, lineNo: number, line: string, layout: Layout): SpectrumError {
  const shown = line.trim().slice(0, 60);
  const nonFinite = fields.find((f) => NON_FINITE_TOKEN.test(f));
  if (nonFinite !== undefined) {
    return new SpectrumError(
      'NON_FINITE',
      `Line ${lineNo} holds "${nonFinite}" instead of a number ("${shown}"). The export contains missing or invalid values; measure again or export the spectrum again.`,
      { line: lineNo, value: nonFinite },
    );
  }
  const rawFields =
    layout.delimiter === 'whitespace'
      ? fields
      : line.split(DELIMITER_CHAR[layout.delimiter]).map((f) => unquote(f.trim()));
  if (rawFields.slice(0, width).some((f) => f === '')) {
    return new SpectrumError(
      'NON_FINITE',
      `Line ${lineNo} has an empty value ("${shown}"). The export is incomplete; export the spectrum again.`,
      { line: lineNo },
    );
  }
  const numericCount = fields.filter((f) => !Number.isNaN(toNumber(f, layout.decimal))).length;
  if (numericCount === fields.length && fields.length !== width) {
    return new SpectrumError(
      'INCONSISTENT_COLUMNS',
      `Line ${lineNo} has ${fields.length} values where the other lines have ${width} ("${shown}"). The file is damaged or mixes several tables; export the spectrum again.`,
      { line: lineNo, found: fields.length, expected: width },
    );
  }
  return new SpectrumError(
    'TEXT_IN_NUMBERS',
    `Line ${lineNo} contains text where numbers are expected ("${shown}"). Remove notes from the data rows or export the spectrum again.`,
    { line: lineNo },
  );
}
