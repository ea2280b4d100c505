/**
 * Strict JCAMP-DX decoder of our own (open standard: McDonald & Wilks, Appl.
 * Spectrosc. 42 (1988) 151, revisions 4.24 and 5.01; NTUPLES as used by 5.01/6.00
 * NMR files). It returns the raw x/y of every page of the first block that holds
 * data, with the block's labels, for any data type (IR, NMR, ...): deciding whether
 * the data are an infrared spectrum is the job of jcamp-spectrum.ts.
 *
 * Checks, each a SpectrumError (all thrown in the default strict mode; in report
 * mode the X, Y, NPOINTS and FIRSTY failures are collected in `issues` instead,
 * so tests can compare the decoded values with another reader):
 *   - Y-value check at every DIF line join (jcamp-asdf.ts)             JCAMP_Y_CHECK
 *   - number of decoded points equals ##NPOINTS (or the NTUPLES dim)   JCAMP_NPOINTS_MISMATCH
 *   - X check: each line's abscissa times XFACTOR equals
 *       FIRSTX + i * (LASTX - FIRSTX) / (NPOINTS - 1)
 *     for the index i of its first point, within half a point spacing
 *     (or half the last written digit when the abscissa is written coarser);
 *     ##DELTAX, when given, must agree with FIRSTX/LASTX/NPOINTS over the
 *     whole range to the same tolerance                                  JCAMP_X_CHECK
 *   - the first ordinate times YFACTOR equals ##FIRSTY (plain XYDATA
 *     only; tolerance 1e-4 of the data range or one YFACTOR step)        JCAMP_Y_CHECK
 *   - a missing Y-check line after a final DIF line is only a warning.
 * x is computed from FIRSTX, LASTX and NPOINTS, as the standard defines it;
 * y is the decoded ordinate times YFACTOR.
 */
import { SpectrumError } from './errors';
import { decodeAsdf } from './jcamp-asdf';
import { ldrText, parseJcampStructure, type JcampStructure, type Ldr } from './jcamp-ldr';

export type JcampForm = 'XYDATA' | 'XYPOINTS' | 'PEAK TABLE';

export interface JcampPage {
  form: JcampForm;
  /** Variable list as written, e.g. "(X++(Y..Y))". */
  variables: string;
  x: Float64Array;
  y: Float64Array;
  xUnits: string;
  yUnits: string;
  xFactor: number;
  yFactor: number;
  firstX?: number;
  lastX?: number;
  npoints?: number;
  /** NTUPLES page label, e.g. "N=1". */
  page?: string;
  /** NTUPLES variable names of x and y, e.g. ["FREQUENCY", "SPECTRUM/REAL"]. */
  varNames?: [string, string];
}

export interface JcampDocument {
  title: string;
  jcampVersion: string;
  dataType: string;
  /** Labels of the data block (canonical key -> full text; first occurrence wins). */
  labels: Record<string, string>;
  pages: JcampPage[];
  /** Blocks in the file, and how many of them hold data (only the first is decoded). */
  blockCount: number;
  dataBlockCount: number;
  warnings: string[];
  /** Check failures collected in report mode (empty in strict mode). */
  issues: SpectrumError[];
}

export interface JcampDecodeOptions {
  checks?: 'strict' | 'report';
  /** Called with the data block's labels before its data are decoded; may throw to refuse the file early. */
  beforeData?: (labels: Record<string, string>) => void;
}

/** Upper bound on points in one page, whatever the header says. */
const MAX_POINTS = 4_000_000;

const DATA_KEYS = new Set(['XYDATA', 'XYPOINTS', 'PEAKTABLE', 'NTUPLES', 'DATATABLE']);

export function decodeJcamp(text: string, options: JcampDecodeOptions = {}): JcampDocument {
  const report = options.checks === 'report';
  const s = parseJcampStructure(text);
  const warnings = [...s.warnings];
  const issues: SpectrumError[] = [];
  const dataBlocks = s.blocks.filter((b) => b.ldrs.some((l) => DATA_KEYS.has(l.key)));
  if (dataBlocks.length === 0) {
    throw new SpectrumError(
      'JCAMP_MISSING_LABEL',
      'The JCAMP-DX file has no spectrum data (no ##XYDATA=, ##XYPOINTS=, ##PEAK TABLE= or ##NTUPLES= record). Export the spectrum again including its data.',
    );
  }
  if (dataBlocks.length > 1) {
    warnings.push(
      `The file holds ${dataBlocks.length} blocks with data; only the first ("${blockTitle(s, dataBlocks[0].ldrs)}") was read.`,
    );
  }
  const block = dataBlocks[0];
  const labels: Record<string, string> = {};
  for (const l of block.ldrs) {
    if (l.key === 'NTUPLES') break;
    if (!(l.key in labels) && !DATA_KEYS.has(l.key)) labels[l.key] = ldrText(s, l);
  }
  options.beforeData?.(labels);
  const ctx: Ctx = { s, report, issues, warnings };
  const pages = block.ldrs.some((l) => l.key === 'NTUPLES')
    ? decodeNtuples(ctx, block.ldrs)
    : [decodeSimple(ctx, block.ldrs, labels)];
  return {
    title: labels.TITLE ?? '',
    jcampVersion: labels.JCAMPDX ?? '',
    dataType: labels.DATATYPE ?? '',
    labels,
    pages,
    blockCount: s.blocks.length,
    dataBlockCount: dataBlocks.length,
    warnings,
    issues,
  };
}

interface Ctx {
  s: JcampStructure;
  report: boolean;
  issues: SpectrumError[];
  warnings: string[];
}

interface PageParams {
  form: JcampForm;
  variables: string;
  xFactor: number;
  yFactor: number;
  firstX?: number;
  lastX?: number;
  npoints?: number;
  deltaX?: number;
  firstY?: number;
  xUnits: string;
  yUnits: string;
}

function blockTitle(s: JcampStructure, ldrs: Ldr[]): string {
  const t = ldrs.find((l) => l.key === 'TITLE');
  return t ? ldrText(s, t) : '';
}

function num(labels: Record<string, string>, key: string): number | undefined {
  const v = labels[key];
  if (v === undefined || v.trim() === '') return undefined;
  const n = Number(v.trim());
  if (!Number.isFinite(n)) {
    throw new SpectrumError(
      'JCAMP_BAD_LABEL_VALUE',
      `The JCAMP-DX record ##${key}= holds "${v.trim().slice(0, 30)}", which is not a number. The file is damaged; export it again.`,
      {
        label: key,
      },
    );
  }
  return n;
}

function missing(what: string): SpectrumError {
  return new SpectrumError(
    'JCAMP_MISSING_LABEL',
    `The JCAMP-DX file lacks the required ${what} record, so its x values cannot be checked. Export the file again from the instrument.`,
    { label: what },
  );
}

function fail(ctx: Ctx, err: SpectrumError): void {
  if (!ctx.report) throw err;
  ctx.issues.push(err);
}

function decodeSimple(ctx: Ctx, ldrs: Ldr[], labels: Record<string, string>): JcampPage {
  const dataLdrs = ldrs.filter((l) => l.key === 'XYDATA' || l.key === 'XYPOINTS' || l.key === 'PEAKTABLE');
  const data = dataLdrs[0];
  if (dataLdrs.length > 1)
    ctx.warnings.push(`The block holds ${dataLdrs.length} data records; only the first (##${data.label}=) was read.`);
  const form: JcampForm = data.key === 'XYDATA' ? 'XYDATA' : data.key === 'XYPOINTS' ? 'XYPOINTS' : 'PEAK TABLE';
  let xFactor = num(labels, 'XFACTOR');
  let yFactor = num(labels, 'YFACTOR');
  if (xFactor === undefined || yFactor === undefined) {
    ctx.warnings.push('##XFACTOR or ##YFACTOR is missing; a factor of 1 was used.');
    xFactor ??= 1;
    yFactor ??= 1;
  }
  const p: PageParams = {
    form,
    variables: data.value,
    xFactor,
    yFactor,
    firstX: num(labels, 'FIRSTX'),
    lastX: num(labels, 'LASTX'),
    npoints: num(labels, 'NPOINTS'),
    deltaX: num(labels, 'DELTAX'),
    firstY: num(labels, 'FIRSTY'),
    xUnits: labels.XUNITS ?? '',
    yUnits: labels.YUNITS ?? '',
  };
  return decodePage(ctx, data, p);
}

function decodePage(ctx: Ctx, data: Ldr, p: PageParams): JcampPage {
  const vars = p.variables.replace(/\s+/g, '').toUpperCase();
  if (p.form === 'XYDATA') {
    if (!/^\(([A-Z])\+\+\(([A-Z])\.\.\2\)\)$/.test(vars)) throw unsupported(p.variables, data);
    return decodeXyData(ctx, data, p);
  }
  const m = /^\(([A-Z]{2,3})\.\.\1\)$/.exec(vars);
  if (!m) throw unsupported(p.variables, data);
  return decodeGroups(ctx, data, p, m[1].length);
}

function unsupported(variables: string, data: Ldr): SpectrumError {
  return new SpectrumError(
    'JCAMP_UNSUPPORTED_FORM',
    `The JCAMP-DX record ##${data.label}= declares the data layout "${variables}", which is not a layout of the standard that Drumline reads (for example (X++(Y..Y)) or (XY..XY)). Export the spectrum again as plain JCAMP-DX.`,
    { label: data.label, variables, line: data.line },
  );
}

function decodeXyData(ctx: Ctx, data: Ldr, p: PageParams): JcampPage {
  if (p.firstX === undefined) throw missing('##FIRSTX=');
  if (p.lastX === undefined) throw missing('##LASTX=');
  if (p.npoints === undefined) throw missing('##NPOINTS=');
  const npoints = p.npoints;
  if (!Number.isInteger(npoints) || npoints < 1 || npoints > MAX_POINTS) {
    throw new SpectrumError(
      'JCAMP_BAD_LABEL_VALUE',
      `##NPOINTS=${npoints} is not a usable number of points. The file is damaged; export it again.`,
      { npoints },
    );
  }
  const r = decodeAsdf(ctx.s.lines, data.contStart, data.contCount, {
    maxPoints: ctx.report ? MAX_POINTS : npoints,
    expected: npoints,
    report: ctx.report,
  });
  ctx.issues.push(...r.issues);
  if (r.endsWithDif)
    ctx.warnings.push(
      'The last data line ends with a difference but no Y-check line follows it; that line could not be verified.',
    );
  const n = r.y.length;
  if (n !== npoints) {
    fail(
      ctx,
      new SpectrumError(
        'JCAMP_NPOINTS_MISMATCH',
        `The JCAMP-DX header announces ${npoints} points (##NPOINTS) but the data hold ${n}. The file is incomplete or was edited; export it again from the instrument.`,
        { npoints, decoded: n },
      ),
    );
  }
  const dx = npoints > 1 ? (p.lastX - p.firstX) / (npoints - 1) : 0;
  const x = new Float64Array(n);
  for (let i = 0; i < n; i++) x[i] = p.firstX + i * dx;
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) y[i] = r.y[i] * p.yFactor;

  // X check: every line's abscissa against the header's axis.
  let worst: { line: number; found: number; expected: number; dev: number; tol: number } | null = null;
  for (const ln of r.lines) {
    const found = ln.x * p.xFactor;
    const expected = p.firstX + ln.start * dx;
    const written = Math.abs(p.xFactor) * 10 ** -ln.xDecimals;
    const tol = Math.max(0.5 * Math.abs(dx), 0.5 * written) * (1 + 1e-9) + 1e-12 * Math.abs(expected);
    const dev = Math.abs(found - expected);
    if (dev > tol && (!worst || dev - tol > worst.dev - worst.tol))
      worst = { line: ln.line, found, expected, dev, tol };
  }
  if (worst) {
    fail(
      ctx,
      new SpectrumError(
        'JCAMP_X_CHECK',
        `The x values in the JCAMP-DX data disagree with the header: line ${worst.line} starts at x = ${round(worst.found)}, but ##FIRSTX, ##LASTX and ##NPOINTS put that point at ${round(worst.expected)} (${round(worst.dev)} apart). ` +
          'The file is damaged or its header was edited; export it again from the instrument.',
        { ...worst, firstX: p.firstX, lastX: p.lastX, npoints, deltaX: dx },
      ),
    );
  }
  if (p.deltaX !== undefined && npoints > 1) {
    const drift = Math.abs(p.deltaX - dx) * (npoints - 1);
    if (drift > 0.5 * Math.abs(dx)) {
      fail(
        ctx,
        new SpectrumError(
          'JCAMP_X_CHECK',
          `The JCAMP-DX header is inconsistent: ##DELTAX=${p.deltaX} but ##FIRSTX, ##LASTX and ##NPOINTS give a spacing of ${round(dx)}, which moves the last point by ${round(drift)}. ` +
            'The file was edited or written incorrectly; export it again from the instrument.',
          { deltaXDeclared: p.deltaX, deltaXFromHeader: dx, drift },
        ),
      );
    }
  }
  if (p.firstY !== undefined && n > 0) checkFirstY(ctx, p.firstY, y, p.yFactor);
  return page(p, x, y);
}

function checkFirstY(ctx: Ctx, firstY: number, y: Float64Array, yFactor: number): void {
  let lo = Infinity;
  let hi = -Infinity;
  for (const v of y) {
    if (v < lo) lo = v;
    if (v > hi) hi = v;
  }
  const tol = Math.max(1e-4 * Math.max(hi - lo, Math.abs(firstY)), Math.abs(yFactor));
  if (Math.abs(y[0] - firstY) > tol) {
    fail(
      ctx,
      new SpectrumError(
        'JCAMP_Y_CHECK',
        `The first y value of the data (${round(y[0])}) differs from the header's ##FIRSTY=${firstY}. The file is damaged or its header was edited; export it again from the instrument.`,
        { firstY, found: y[0] },
      ),
    );
  }
}

/** XYPOINTS and PEAK TABLE: groups of 2 (XY) or 3 (XYW, XYM) free-format numbers. */
function decodeGroups(ctx: Ctx, data: Ldr, p: PageParams, size: number): JcampPage {
  const values: number[] = [];
  for (let i = 0; i < data.contCount; i++) {
    const lineNo = data.contStart + i + 1;
    const raw = ctx.s.lines[data.contStart + i];
    const k = raw.indexOf('$$');
    const line = (k === -1 ? raw : raw.slice(0, k)).trim();
    if (!line) continue;
    for (const tok of line.split(/[\s,;()]+/)) {
      if (!tok) continue;
      if (tok === '?') values.push(NaN);
      else if (/^[+-]?(\d+\.?\d*|\.\d+)([eE][+-]?\d+)?$/.test(tok)) values.push(Number(tok));
      else if (size === 3 && /^<.*>$/.test(tok)) values.push(NaN);
      else {
        throw new SpectrumError(
          'JCAMP_BAD_CHARACTER',
          `Line ${lineNo} of the JCAMP-DX ##${data.label}= data holds "${tok.slice(0, 20)}", which is not a number. The file is damaged; export it again from the instrument.`,
          { line: lineNo, token: tok },
        );
      }
      if (values.length > MAX_POINTS * size)
        throw new SpectrumError(
          'JCAMP_NPOINTS_MISMATCH',
          'The JCAMP-DX file holds far too many points. Export a single spectrum again.',
        );
    }
  }
  if (values.length % size !== 0) {
    throw new SpectrumError(
      'JCAMP_UNREADABLE',
      `The ##${data.label}= data hold ${values.length} numbers, which do not form complete groups of ${size}. The file is damaged; export it again from the instrument.`,
      { values: values.length, group: size },
    );
  }
  const n = values.length / size;
  const x = new Float64Array(n);
  const y = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    x[i] = values[i * size] * p.xFactor;
    y[i] = values[i * size + 1] * p.yFactor;
  }
  if (p.npoints !== undefined && p.npoints !== n) {
    fail(
      ctx,
      new SpectrumError(
        'JCAMP_NPOINTS_MISMATCH',
        `The JCAMP-DX header announces ${p.npoints} points (##NPOINTS) but the data hold ${n}. The file is incomplete or was edited; export it again from the instrument.`,
        { npoints: p.npoints, decoded: n },
      ),
    );
  }
  if (n > 1) {
    const step = Math.abs(x[1] - x[0]);
    for (const [label, want, got] of [
      ['##FIRSTX', p.firstX, x[0]],
      ['##LASTX', p.lastX, x[n - 1]],
    ] as const) {
      if (want !== undefined && Math.abs(want - got) > Math.max(0.5 * step, 1e-9 * Math.abs(want))) {
        fail(
          ctx,
          new SpectrumError(
            'JCAMP_X_CHECK',
            `The x values in the JCAMP-DX data disagree with the header: ${label}=${want} but the data give ${round(got)}. The file is damaged or its header was edited; export it again from the instrument.`,
            { label, declared: want, found: got },
          ),
        );
      }
    }
  }
  return page(p, x, y);
}

function page(p: PageParams, x: Float64Array, y: Float64Array, extra: Partial<JcampPage> = {}): JcampPage {
  return {
    form: p.form,
    variables: p.variables,
    x,
    y,
    xUnits: p.xUnits,
    yUnits: p.yUnits,
    xFactor: p.xFactor,
    yFactor: p.yFactor,
    firstX: p.firstX,
    lastX: p.lastX,
    npoints: p.npoints,
    ...extra,
  };
}

/** NTUPLES: one page per ##PAGE=, variables described by ##SYMBOL=, ##FIRST=, ##LAST=, ##FACTOR=, ##VAR DIM=. */
function decodeNtuples(ctx: Ctx, ldrs: Ldr[]): JcampPage[] {
  const start = ldrs.findIndex((l) => l.key === 'NTUPLES');
  const table: Record<string, string[]> = {};
  const pages: JcampPage[] = [];
  let pageLabel: string | undefined;
  let pageLdrs: Record<string, string> = {};
  for (let i = start + 1; i < ldrs.length; i++) {
    const l = ldrs[i];
    if (l.key === 'ENDNTUPLES' || l.key === 'END') break;
    if (l.key === 'PAGE') {
      pageLabel = l.value;
      pageLdrs = {};
      continue;
    }
    if (l.key === 'DATATABLE') {
      pages.push(ntuplesPage(ctx, l, table, pageLabel, pageLdrs));
      continue;
    }
    const text = ldrText(ctx.s, l);
    if (pageLabel === undefined) table[l.key] = text.split(',').map((v) => v.trim());
    else pageLdrs[l.key] = text;
  }
  if (pages.length === 0) {
    throw new SpectrumError(
      'JCAMP_MISSING_LABEL',
      'The JCAMP-DX NTUPLES block holds no ##DATA TABLE= record, so it has no spectrum data. Export the spectrum again.',
    );
  }
  return pages;
}

function ntuplesPage(
  ctx: Ctx,
  l: Ldr,
  table: Record<string, string[]>,
  pageLabel: string | undefined,
  pageLdrs: Record<string, string>,
): JcampPage {
  const [vars, kindRaw = 'XYDATA'] = l.value.split(/\)\s*,/).length > 1 ? splitTable(l.value) : [l.value, 'XYDATA'];
  const kind = kindRaw.replace(/\s+/g, '').toUpperCase();
  const v = vars.replace(/\s+/g, '').toUpperCase();
  const symbols = (table.SYMBOL ?? []).map((s) => s.toUpperCase());
  const m = /^\(([A-Z0-9]+)\+\+\(([A-Z0-9]+)\.\.\2\)\)$/.exec(v) ?? /^\(([A-Z])([A-Z])\.\.\1\2\)$/.exec(v);
  if (!m || !['XYDATA', 'XYPOINTS', 'PEAKS', 'PEAKTABLE'].includes(kind)) throw unsupported(l.value, l);
  const xi = symbols.indexOf(m[1]);
  const yi = symbols.indexOf(m[2]);
  if (xi < 0 || yi < 0) {
    throw new SpectrumError(
      'JCAMP_UNREADABLE',
      `The NTUPLES data table uses variables "${m[1]}" and "${m[2]}", which ##SYMBOL= does not define. The file is damaged; export it again.`,
      {
        line: l.line,
      },
    );
  }
  const at = (key: string, i: number) => {
    const s = table[key]?.[i];
    if (s === undefined || s === '') return undefined;
    const n = Number(s);
    if (!Number.isFinite(n))
      throw new SpectrumError(
        'JCAMP_BAD_LABEL_VALUE',
        `The NTUPLES record ##${key}= holds "${s}", which is not a number. The file is damaged; export it again.`,
      );
    return n;
  };
  const pageNpoints = pageLdrs.NPOINTS !== undefined ? Number(pageLdrs.NPOINTS) : undefined;
  const p: PageParams = {
    form: kind === 'XYDATA' ? 'XYDATA' : kind === 'XYPOINTS' ? 'XYPOINTS' : 'PEAK TABLE',
    variables: vars.trim(),
    xFactor: at('FACTOR', xi) ?? 1,
    yFactor: at('FACTOR', yi) ?? 1,
    firstX: at('FIRST', xi),
    lastX: at('LAST', xi),
    npoints: pageNpoints ?? at('VARDIM', yi) ?? at('VARDIM', xi),
    xUnits: table.UNITS?.[xi] ?? '',
    yUnits: table.UNITS?.[yi] ?? '',
  };
  const pg = p.form === 'XYDATA' ? decodeXyData(ctx, l, p) : decodeGroups(ctx, l, p, 2);
  pg.page = pageLabel;
  pg.varNames = [table.VARNAME?.[xi] ?? m[1], table.VARNAME?.[yi] ?? m[2]];
  return pg;
}

/** "(X++(R..R)), XYDATA" -> ["(X++(R..R))", "XYDATA"]. */
function splitTable(value: string): [string, string] {
  const k = value.lastIndexOf(')');
  return [
    value.slice(0, k + 1),
    value
      .slice(k + 1)
      .replace(/^\s*,/, '')
      .trim(),
  ];
}

function round(v: number): string {
  return String(Number(v.toPrecision(7)));
}
