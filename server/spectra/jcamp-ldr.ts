/**
 * JCAMP-DX structure: labelled data records (LDRs) and blocks.
 *
 * JCAMP-DX (McDonald & Wilks, Appl. Spectrosc. 42 (1988) 151; revisions 4.24 and
 * 5.01) is a text format of records "##LABEL=value". A value runs on until the
 * next line that starts with "##"; "$$" starts a comment that runs to the end of
 * the line. Labels are compared after removing spaces, hyphens, slashes and
 * underscores and ignoring case ("DATA TYPE" = "DATATYPE", "JCAMP-DX" = "JCAMPDX").
 * A block runs from ##TITLE= to ##END=; a link block (##BLOCKS=n) nests other
 * blocks. A file that ends inside a block was cut short.
 */
import { SpectrumError } from './errors';

export interface Ldr {
  /** Label as written, without "##". */
  label: string;
  /** Canonical label: upper case without spaces, "-", "/" and "_". */
  key: string;
  /** Text after "=" on the label line, comment removed and trimmed. */
  value: string;
  /** 1-based line number of the label line. */
  line: number;
  /** Index (into the line array) of the first continuation line, and how many there are. */
  contStart: number;
  contCount: number;
}

export interface JcampBlockRaw {
  ldrs: Ldr[];
  /** Nesting depth: 0 for the outermost block. */
  depth: number;
  /** Index of this block's ##TITLE among all LDRs of the file. */
  startLine: number;
}

export interface JcampStructure {
  lines: string[];
  blocks: JcampBlockRaw[];
  warnings: string[];
}

export const canonicalLabel = (label: string) => label.toUpperCase().replace(/[\s\-/_]+/g, '');

/** Removes a "$$" comment from one line. */
export const stripComment = (line: string) => {
  const k = line.indexOf('$$');
  return k === -1 ? line : line.slice(0, k);
};

/** Full text of a record: the label line value plus its continuation lines (comments removed). */
export function ldrText(s: JcampStructure, ldr: Ldr): string {
  let out = ldr.value;
  for (let i = 0; i < ldr.contCount; i++) {
    const t = stripComment(s.lines[ldr.contStart + i]).trim();
    if (t) out += (out ? '\n' : '') + t;
  }
  return out;
}

function unreadable(message: string, line?: number): SpectrumError {
  return new SpectrumError('JCAMP_UNREADABLE', message, line ? { line } : undefined);
}

/** Splits JCAMP-DX text into blocks of records. Throws JCAMP_UNREADABLE / JCAMP_TRUNCATED. */
export function parseJcampStructure(text: string): JcampStructure {
  const lines = text.split(/\r\n|\r|\n/);
  const warnings: string[] = [];
  const blocks: JcampBlockRaw[] = [];
  const open: JcampBlockRaw[] = [];
  let current: Ldr | null = null;
  let sawTitle = false;
  let closedAll = false;
  let trailingWarned = false;

  for (let i = 0; i < lines.length; i++) {
    const raw = lines[i];
    const trimmed = raw.trimStart();
    if (trimmed.startsWith('##')) {
      let eq = trimmed.indexOf('=');
      if (eq === -1 && /^##[$.]/.test(trimmed)) {
        // A private ("##$") or instrument ("##.") label without "=": seen in real
        // files (e.g. "##$CONTENT"); kept as an empty record with a warning.
        warnings.push(`Line ${i + 1} ("${trimmed.slice(0, 40)}") has no "="; read as an empty record.`);
        eq = trimmed.length;
      }
      if (eq === -1) {
        throw unreadable(
          `Line ${i + 1} starts a JCAMP-DX record ("${trimmed.slice(0, 40)}") but has no "=". The file is damaged; export it again from the instrument.`,
          i + 1,
        );
      }
      const label = trimmed.slice(2, eq).trim();
      const key = canonicalLabel(label);
      const ldr: Ldr = {
        label,
        key,
        value: stripComment(trimmed.slice(eq + 1)).trim(),
        line: i + 1,
        contStart: i + 1,
        contCount: 0,
      };
      current = ldr;
      if (key === 'TITLE') {
        if (closedAll)
          warnings.push(`A second block starts at line ${i + 1} after the file's last ##END=; it was ignored.`);
        sawTitle = true;
        const block: JcampBlockRaw = { ldrs: [ldr], depth: open.length, startLine: i + 1 };
        if (!closedAll) {
          blocks.push(block);
          open.push(block);
        }
        continue;
      }
      if (!sawTitle) {
        throw unreadable(
          `The first JCAMP-DX record must be ##TITLE=, but line ${i + 1} is "##${label}=". Export the file again from the instrument.`,
          i + 1,
        );
      }
      if (open.length === 0) {
        if (key !== 'END') closedAll = true;
        continue;
      }
      open[open.length - 1].ldrs.push(ldr);
      if (key === 'END') {
        open.pop();
        if (open.length === 0) closedAll = true;
        current = null;
      }
      continue;
    }
    if (current) {
      current.contCount = i + 1 - current.contStart;
    } else if (!sawTitle && stripComment(raw).trim() !== '') {
      throw unreadable(
        'The file does not start with a ##TITLE= record, so it is not a valid JCAMP-DX file. Export it again from the instrument.',
        i + 1,
      );
    } else if (closedAll && !trailingWarned && stripComment(raw).trim() !== '') {
      warnings.push(`Text after the final ##END= (from line ${i + 1}) was ignored.`);
      trailingWarned = true;
    }
  }
  if (open.length > 0) {
    throw new SpectrumError(
      'JCAMP_TRUNCATED',
      'The JCAMP-DX file ends before its closing ##END= record, so it was cut short (an interrupted copy or upload). Export or copy the file again and upload the complete file.',
      { openBlocks: open.length },
    );
  }
  if (!sawTitle)
    throw unreadable(
      'No ##TITLE= record was found, so this is not a JCAMP-DX file. Export the spectrum again as JCAMP-DX.',
    );
  return { lines, blocks, warnings };
}
