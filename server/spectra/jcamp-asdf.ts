/**
 * Decoder for JCAMP-DX "(X++(Y..Y))" data lines in every form the standard allows
 * (McDonald & Wilks 1988, tables of pseudo-digits; same in revisions 4.24 / 5.01):
 *
 *   AFFN  free-format numbers separated by blanks or commas   "16383  -10247  1201"
 *   PAC   packed: the sign is the separator                    "16383-10247+1201"
 *   SQZ   squeezed: the first digit and sign in one letter     @=0, A..I=+1..+9, a..i=-1..-9
 *   DIF   difference from the previous ordinate                %=0, J..R=+1..+9, j..r=-1..-9
 *   DUP   repeat count of the previous value or difference     S..Z=1..8, s=9
 *
 * Each line starts with the abscissa of its first ordinate (in units of XFACTOR).
 * Y-value check: when a line ends in DIF form, the next line must start with that
 * last ordinate again, written in absolute form; a mismatch means a damaged
 * character somewhere in the previous line and is refused (JCAMP_Y_CHECK). The
 * repeated ordinate is not a new point.
 *
 * Values are returned raw (before YFACTOR), with one record per line so that the
 * caller can check each line's abscissa (the X check).
 */
import { SpectrumError } from './errors';
import { stripComment } from './jcamp-ldr';

export interface AsdfLine {
  /** 1-based line number in the file. */
  line: number;
  /** Abscissa written at the start of the line, before XFACTOR. */
  x: number;
  /** Digits after the decimal point in the written abscissa. */
  xDecimals: number;
  /** Index of the point the abscissa belongs to. */
  start: number;
  /** True when the line began with a Y-check value. */
  yChecked: boolean;
}

export interface AsdfResult {
  y: Float64Array;
  lines: AsdfLine[];
  /** The last line ended in DIF form without a following Y-check line. */
  endsWithDif: boolean;
  /** Y-check failures, only collected (not thrown) in report mode. */
  issues: SpectrumError[];
}

const enum Kind {
  Abs,
  Dif,
  Dup,
}

export interface AsdfOptions {
  /** Refuse more points than this (a damaged DUP count must not exhaust memory). */
  maxPoints: number;
  /** Expected number of points (initial buffer size). */
  expected?: number;
  /** Collect Y-check failures instead of throwing (for comparisons in tests). */
  report?: boolean;
}

function badChar(ch: string, line: number, col: number): SpectrumError {
  return new SpectrumError(
    'JCAMP_BAD_CHARACTER',
    `Line ${line} of the JCAMP-DX data contains the character "${ch}" (position ${col}), which is not allowed in spectrum data. The file is damaged; export it again from the instrument.`,
    { line, column: col, character: ch },
  );
}

function tooMany(max: number, line: number): SpectrumError {
  return new SpectrumError(
    'JCAMP_NPOINTS_MISMATCH',
    `The JCAMP-DX data hold more points than the header announces (${max}) by line ${line}. The file is damaged or was edited; export it again from the instrument.`,
    { line, npoints: max },
  );
}

/**
 * Decodes the data lines lines[from .. from+count-1]. Throws JCAMP_BAD_CHARACTER,
 * JCAMP_Y_CHECK (unless report), JCAMP_NPOINTS_MISMATCH (more than maxPoints),
 * JCAMP_UNREADABLE (a line without abscissa, a DIF or DUP with nothing before it).
 */
export function decodeAsdf(lines: string[], from: number, count: number, opts: AsdfOptions): AsdfResult {
  const cap = Math.max(0, opts.maxPoints);
  let y = new Float64Array(Math.min(cap, opts.expected ?? 4096));
  const room = (k: number, lineNo: number) => {
    if (n + k > cap) throw tooMany(cap, lineNo);
    if (n + k > y.length) {
      const bigger = new Float64Array(Math.min(cap, Math.max(2 * y.length, n + k)));
      bigger.set(y.subarray(0, n));
      y = bigger;
    }
  };
  const out: AsdfLine[] = [];
  const issues: SpectrumError[] = [];
  let n = 0;
  let lastKind: Kind.Abs | Kind.Dif | null = null;
  let lastDif = 0;
  let pendingCheck = false;
  let prevLine = 0;
  const kinds: Kind[] = [];
  const vals: number[] = [];
  const texts: string[] = [];

  for (let li = from; li < from + count; li++) {
    const lineNo = li + 1;
    tokenize(stripComment(lines[li]), lineNo, kinds, vals, texts);
    if (kinds.length === 0) continue;
    if (kinds[0] !== Kind.Abs || Number.isNaN(vals[0])) {
      throw new SpectrumError(
        'JCAMP_UNREADABLE',
        `Line ${lineNo} of the JCAMP-DX data does not start with an x value. The file is damaged; export it again from the instrument.`,
        { line: lineNo },
      );
    }
    const xText = texts[0];
    const dot = xText.indexOf('.');
    const xDecimals = dot === -1 ? 0 : xText.replace(/[eE].*$/, '').length - dot - 1;
    let t = 1;
    let start = n;
    let yChecked = false;
    let current = n > 0 ? y[n - 1] : NaN;
    if (pendingCheck && kinds.length > 1) {
      const v = vals[1];
      const prev = y[n - 1];
      if (kinds[1] !== Kind.Abs || !(Math.abs(v - prev) <= 1e-9 * Math.max(1, Math.abs(prev)))) {
        const err = new SpectrumError(
          'JCAMP_Y_CHECK',
          `The JCAMP-DX data fail the standard's Y-value check at line ${lineNo}: it should repeat the last value of line ${prevLine} (${prev}) but starts with ${kinds[1] === Kind.Abs ? v : 'a difference'}. ` +
            'A character in the data was changed, so the spectrum cannot be trusted. Export the file again from the instrument.',
          { line: lineNo, previousLine: prevLine, expected: prev, found: kinds[1] === Kind.Abs ? v : null },
        );
        if (!opts.report) throw err;
        issues.push(err);
      }
      if (kinds[1] === Kind.Abs) {
        // The check value is not a new point. Later differences build on it
        // (identical to the stored point unless a failure was only reported).
        current = v;
        lastKind = Kind.Abs;
        t = 2;
        start = n - 1;
        yChecked = true;
      }
    }
    out.push({ line: lineNo, x: vals[0], xDecimals, start, yChecked });
    for (; t < kinds.length; t++) {
      const k = kinds[t];
      const v = vals[t];
      if (k === Kind.Abs) {
        room(1, lineNo);
        current = v;
        y[n++] = v;
        lastKind = Kind.Abs;
      } else if (k === Kind.Dif) {
        if (lastKind === null) throw orphan('difference (DIF)', lineNo);
        room(1, lineNo);
        current += v;
        y[n++] = current;
        lastKind = Kind.Dif;
        lastDif = v;
      } else {
        if (lastKind === null) throw orphan('repeat count (DUP)', lineNo);
        if (!Number.isInteger(v) || v < 1) throw badChar(texts[t], lineNo, 0);
        room(v - 1, lineNo);
        for (let r = 1; r < v; r++) {
          if (lastKind === Kind.Dif) current += lastDif;
          y[n++] = current;
        }
      }
    }
    pendingCheck = lastKind === Kind.Dif;
    prevLine = lineNo;
  }
  return { y: y.subarray(0, n), lines: out, endsWithDif: pendingCheck, issues };
}

function orphan(what: string, line: number): SpectrumError {
  return new SpectrumError(
    'JCAMP_UNREADABLE',
    `Line ${line} of the JCAMP-DX data starts with a ${what} that has no value before it. The file is damaged; export it again from the instrument.`,
    { line },
  );
}

const isDigit = (c: number) => c >= 48 && c <= 57;

/** Splits one data line into tokens (kind, value, text). */
function tokenize(s: string, lineNo: number, kinds: Kind[], vals: number[], texts: string[]): void {
  kinds.length = 0;
  vals.length = 0;
  texts.length = 0;
  const len = s.length;
  let i = 0;
  while (i < len) {
    const c = s.charCodeAt(i);
    if (c === 32 || c === 9 || c === 44) {
      i++;
      continue;
    }
    let kind: Kind;
    let lead: string;
    let plain = false; // AFFN / PAC number: may carry an exponent
    if (isDigit(c) || c === 46) {
      kind = Kind.Abs;
      lead = '';
      plain = true;
    } else if (c === 43 || c === 45) {
      const d = s.charCodeAt(i + 1);
      if (!(isDigit(d) || d === 46)) throw badChar(s[i], lineNo, i + 1);
      kind = Kind.Abs;
      lead = c === 45 ? '-' : '';
      plain = true;
      i++;
    } else if (c === 64) {
      kind = Kind.Abs;
      lead = '0';
      i++;
    } else if (c >= 65 && c <= 73) {
      kind = Kind.Abs;
      lead = String(c - 64);
      i++;
    } else if (c >= 97 && c <= 105) {
      kind = Kind.Abs;
      lead = '-' + String(c - 96);
      i++;
    } else if (c === 37) {
      kind = Kind.Dif;
      lead = '0';
      i++;
    } else if (c >= 74 && c <= 82) {
      kind = Kind.Dif;
      lead = String(c - 73);
      i++;
    } else if (c >= 106 && c <= 114) {
      kind = Kind.Dif;
      lead = '-' + String(c - 105);
      i++;
    } else if (c >= 83 && c <= 90) {
      kind = Kind.Dup;
      lead = String(c - 82);
      i++;
    } else if (c === 115) {
      kind = Kind.Dup;
      lead = '9';
      i++;
    } else if (c === 63) {
      kinds.push(Kind.Abs);
      vals.push(NaN);
      texts.push('?');
      i++;
      continue;
    } else {
      throw badChar(s[i], lineNo, i + 1);
    }
    const st = i;
    let sawDot = false;
    while (i < len) {
      const d = s.charCodeAt(i);
      if (isDigit(d)) i++;
      else if (d === 46 && !sawDot) {
        sawDot = true;
        i++;
      } else if ((d === 69 || d === 101) && plain) {
        // Exponent only when unambiguous: E followed by a sign, or E + digit after a decimal point.
        const e1 = s.charCodeAt(i + 1);
        if ((e1 === 43 || e1 === 45) && isDigit(s.charCodeAt(i + 2))) i += 3;
        else if (sawDot && isDigit(e1)) i += 2;
        else break;
        while (i < len && isDigit(s.charCodeAt(i))) i++;
        break;
      } else break;
    }
    const text = lead + s.slice(st, i);
    const v = Number(text);
    if (Number.isNaN(v) || text === '' || text === '-') throw badChar(s[Math.max(0, st - 1)], lineNo, st);
    kinds.push(kind);
    vals.push(v);
    texts.push(text);
  }
}
