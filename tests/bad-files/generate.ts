/**
 * Writes the bad-input corpus of this folder (and the two controls in controls/).
 * Deterministic: running it again rewrites identical files. Run with
 *   npx tsx tests/bad-files/generate.ts
 * The files are committed; tests read them, they do not run this script.
 * README.md lists every file with the SpectrumError code it must produce.
 *
 * The spectrum used throughout is synthetic (Gaussian bands on a flat baseline,
 * common practice for test signals), 4000-400 cm-1 at 10 cm-1 spacing.
 */
import { mkdirSync, writeFileSync } from 'node:fs';
import path from 'node:path';

const dir = path.dirname(new URL(import.meta.url).pathname);
mkdirSync(path.join(dir, 'controls'), { recursive: true });

// --- the synthetic spectrum -------------------------------------------------
const N = 361;
const X = Array.from({ length: N }, (_, i) => 4000 - 10 * i);
const BANDS = [
  [2920, 40, 0.6],
  [1730, 15, 0.9],
  [1450, 20, 0.3],
  [1100, 30, 0.5],
] as const;
const absorbance = (x: number) => 0.05 + BANDS.reduce((s, [c, w, h]) => s + h * Math.exp(-(((x - c) / w) ** 2)), 0);
const A = X.map(absorbance);
const T_PERCENT = A.map((a) => 100 * 10 ** -a);
const Y_INT = A.map((a) => Math.round(a * 10000)); // YFACTOR 0.0001

const write = (name: string, body: string | Uint8Array) => writeFileSync(path.join(dir, name), body);
const csv = (header: string | null, xs: number[], ys: (number | string)[], sep = ',') =>
  [...(header === null ? [] : [header]), ...xs.map((x, i) => `${x}${sep}${ys[i]}`)].join('\n') + '\n';
const r6 = (v: number) => Number(v.toPrecision(6));

// --- JCAMP-DX writers (AFFN and DIF/DUP), McDonald & Wilks 1988 ---------------
interface Hdr {
  title?: string;
  dataType?: string;
  xUnits?: string;
  yUnits?: string;
  firstX?: number | string;
  lastX?: number | string;
  npoints?: number | string;
  xFactor?: number;
  yFactor?: number;
  firstY?: number;
  deltaX?: number;
  extra?: string[];
}
function jcampHeader(h: Hdr): string[] {
  const out = [`##TITLE=${h.title ?? 'Synthetic test spectrum'}`, '##JCAMP-DX=4.24'];
  if (h.dataType !== '') out.push(`##DATA TYPE=${h.dataType ?? 'INFRARED SPECTRUM'}`);
  out.push('##ORIGIN=Drumline test corpus', '##OWNER=Drumline test corpus');
  if (h.xUnits !== '') out.push(`##XUNITS=${h.xUnits ?? '1/CM'}`);
  if (h.yUnits !== '') out.push(`##YUNITS=${h.yUnits ?? 'ABSORBANCE'}`);
  out.push(`##XFACTOR=${h.xFactor ?? 1}`, `##YFACTOR=${h.yFactor ?? 0.0001}`);
  if (h.firstX !== '') out.push(`##FIRSTX=${h.firstX ?? X[0]}`);
  if (h.lastX !== '') out.push(`##LASTX=${h.lastX ?? X[N - 1]}`);
  if (h.deltaX !== undefined) out.push(`##DELTAX=${h.deltaX}`);
  if (h.npoints !== '') out.push(`##NPOINTS=${h.npoints ?? N}`);
  out.push(`##FIRSTY=${h.firstY ?? Y_INT[0] * 0.0001}`);
  out.push(...(h.extra ?? []));
  return out;
}
function affnLines(xs: number[], ys: (number | string)[], perLine = 8): string[] {
  const lines: string[] = [];
  for (let i = 0; i < ys.length; i += perLine) lines.push([xs[i], ...ys.slice(i, i + perLine)].join(' '));
  return lines;
}
const SQZ = (v: number) => {
  const s = String(Math.abs(v));
  return (v < 0 ? 'abcdefghi'[+s[0] - 1] : '@ABCDEFGHI'[+s[0]]) + s.slice(1);
};
const DIF = (v: number) => {
  const s = String(Math.abs(v));
  return (v < 0 ? 'jklmnopqr'[+s[0] - 1] : '%JKLMNOPQR'[+s[0]]) + s.slice(1);
};
const DUP = (n: number) => {
  const s = String(n);
  return 'STUVWXYZs'[+s[0] - 1] + s.slice(1);
};
/** DIF/DUP lines, 10 ordinates per line, each line after the first starting with the Y-check value. */
function difdupLines(xs: number[], ys: number[]): string[] {
  const lines: string[] = [];
  let i = 0;
  while (i < ys.length) {
    const start = i === 0 ? 0 : i - 1; // Y check: repeat the previous line's last ordinate
    let line = `${xs[start]}${SQZ(ys[start])}`;
    let k = start + 1;
    const end = Math.min(ys.length, start + 11);
    while (k < end) {
      const d = ys[k] - ys[k - 1];
      let run = 1;
      while (k + run < end && ys[k + run] - ys[k + run - 1] === d) run++;
      line += DIF(d) + (run > 1 ? DUP(run) : '');
      k += run;
    }
    lines.push(line);
    i = k;
  }
  lines.push(`${xs[ys.length - 1]}${SQZ(ys[ys.length - 1])}  $$ Y check of the last line`);
  return lines;
}
const jcamp = (hdr: Hdr, form: string, data: string[], end = true) =>
  [...jcampHeader(hdr), `##XYDATA=${form}`, ...data, ...(end ? ['##END='] : [])].join('\n') + '\n';

// --- controls: must read without error ----------------------------------------
writeFileSync(path.join(dir, 'controls/control-affn.jdx'), jcamp({}, '(X++(Y..Y))', affnLines(X, Y_INT)));
const difdup = jcamp({}, '(X++(Y..Y))', difdupLines(X, Y_INT));
writeFileSync(path.join(dir, 'controls/control-difdup.jdx'), difdup);
writeFileSync(path.join(dir, 'controls/control-percent-t.csv'), csv('cm-1,%T', X, T_PERCENT.map(r6)));

// --- the whole file ------------------------------------------------------------
write('empty.csv', '');
write('whitespace-only.txt', '   \n\n\t \r\n  \n');
// A PNG signature followed by bytes 0..255: what an image upload looks like.
write(
  'image-named.csv',
  Uint8Array.from([0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a, ...Array.from({ length: 256 }, (_, i) => i)]),
);
// A zip local-file header (an .xlsx or .zip renamed): binary with NUL bytes.
write(
  'spreadsheet-renamed.csv',
  Uint8Array.from([
    0x50,
    0x4b,
    0x03,
    0x04,
    0x14,
    0x00,
    0x06,
    0x00,
    0x08,
    0x00,
    ...Array.from({ length: 200 }, (_, i) => (i * 37) % 256),
  ]),
);

// --- delimited text structure ----------------------------------------------------
write('one-column.csv', 'absorbance\n' + A.map(r6).join('\n') + '\n');
write('header-only.csv', 'cm-1,A\n');
write('prose.txt', 'Dear colleague,\nplease find the spectrum of drum 12 attached.\nBest regards\n');
write(
  'text-in-numbers.csv',
  csv(
    'cm-1,A',
    X,
    A.map(r6).map((v, i) => (i === 150 ? '0.1o3' : v)),
  ),
);
write(
  'nan-values.csv',
  csv(
    'cm-1,A',
    X,
    A.map(r6).map((v, i) => (i === 40 ? 'NaN' : v)),
  ),
);
write(
  'empty-field.csv',
  csv(
    'cm-1,A',
    X,
    A.map(r6).map((v, i) => (i === 77 ? '' : v)),
  ),
);
write('three-columns.csv', 'cm-1,A,A\n' + X.map((x, i) => `${x},${r6(A[i])},${r6(A[i] * 1.1)}`).join('\n') + '\n');
write(
  'ragged-rows.csv',
  csv(
    'cm-1,A',
    X,
    A.map(r6).map((v, i) => (i === 200 ? `${v},0.5` : v)),
  ),
);

// --- values ------------------------------------------------------------------------
write('too-few-points.csv', csv('cm-1,A', X.slice(0, 12), A.slice(0, 12).map(r6)));
write(
  'descending-duplicates.csv',
  csv(
    'cm-1,A',
    X.map((x, i) => (i === 101 ? X[100] : x)),
    A.map(r6),
  ),
);
write(
  'two-scans-appended.csv',
  csv('cm-1,A', [...X.slice(0, 180), ...X.slice(0, 180)], [...A.slice(0, 180), ...A.slice(0, 180)].map(r6)),
);
write(
  'percent-t-above-100.csv',
  csv(
    'cm-1,%T',
    X,
    T_PERCENT.map((t) => r6(t * 1.5)),
  ),
);
write(
  'zero-transmittance.csv',
  csv(
    'cm-1,%T',
    X,
    T_PERCENT.map((t, i) => (i === 123 ? 0 : r6(t))),
  ),
);
// Headerless x from 800 to 1300 on an uneven step: cm-1 or nm cannot be told apart.
const XU = Array.from({ length: 200 }, (_, i) => r6(800.31 + 2.5127 * i));
write(
  'unknown-x-units.csv',
  csv(
    null,
    XU,
    XU.map((x) => r6(0.1 + 0.5 * Math.exp(-(((x - 1000) / 30) ** 2)))),
  ),
);
write(
  'unknown-y-units.csv',
  csv(
    'cm-1,counts',
    X,
    A.map((a) => Math.round(a * 50000)),
  ),
);
write('micrometres-labelled-cm-1.csv', csv('cm-1,A', X.map((x) => r6(1e4 / x)).reverse(), A.map(r6).reverse()));

// --- JCAMP-DX --------------------------------------------------------------------------
const nirNm = Array.from({ length: 141 }, (_, i) => 1100 + 10 * i); // 1100-2500 nm
write(
  'nm-data-labelled-cm-1.jdx',
  jcamp(
    {
      title: 'NIR spectrum, x written in nm but labelled 1/CM',
      dataType: 'NEAR INFRARED SPECTRUM',
      firstX: 1100,
      lastX: 2500,
      npoints: 141,
      firstY: 0.2,
    },
    '(X++(Y..Y))',
    affnLines(
      nirNm,
      nirNm.map((x) => 2000 + Math.round(3000 * Math.exp(-(((x - 1730) / 40) ** 2)))),
    ),
  ),
);
const difLines = difdupLines(X, Y_INT);
write('truncated.jdx', jcamp({}, '(X++(Y..Y))', difLines, false).split('\n').slice(0, 30).join('\n').slice(0, -7));
write('missing-end.jdx', jcamp({}, '(X++(Y..Y))', difLines, false));
write(
  'wrong-xydata-form.jdx',
  jcamp(
    {},
    '(X,Y)',
    X.map((x, i) => `${x}, ${Y_INT[i]}`),
  ),
);
// One character of a DIF line changed (the first positive difference on data line 10: J->K, K->L, ...).
const corrupted = [...difLines];
corrupted[9] = corrupted[9].replace(/[J-Q]/, (c) => String.fromCharCode(c.charCodeAt(0) + 1));
write('dif-check-corrupted.jdx', jcamp({}, '(X++(Y..Y))', corrupted));
write('npoints-mismatch.jdx', jcamp({ npoints: N + 20 }, '(X++(Y..Y))', affnLines(X, Y_INT)));
// LASTX edited: the line abscissas no longer fall on FIRSTX + i * (LASTX - FIRSTX) / (NPOINTS - 1).
write('x-check-lastx-edited.jdx', jcamp({ lastX: 300 }, '(X++(Y..Y))', affnLines(X, Y_INT)));
write(
  'bad-character.jdx',
  jcamp(
    {},
    '(X++(Y..Y))',
    difLines.map((l, i) => (i === 5 ? l.slice(0, 8) + '!' + l.slice(8) : l)),
  ),
);
write(
  'nmr-spectrum.jdx',
  jcamp(
    {
      title: '1H NMR of a test compound',
      dataType: 'NMR SPECTRUM',
      xUnits: 'HZ',
      yUnits: 'ARBITRARY UNITS',
      extra: ['##.OBSERVE FREQUENCY=400.13'],
    },
    '(X++(Y..Y))',
    affnLines(X, Y_INT),
  ),
);
write('no-title.jdx', jcamp({}, '(X++(Y..Y))', affnLines(X, Y_INT)).replace(/^##TITLE=.*\n/, ''));
write('missing-npoints.jdx', jcamp({ npoints: '' }, '(X++(Y..Y))', affnLines(X, Y_INT)));
write('bad-npoints-value.jdx', jcamp({ npoints: 'three hundred' }, '(X++(Y..Y))', affnLines(X, Y_INT)));
write('label-without-equals.jdx', jcamp({}, '(X++(Y..Y))', affnLines(X, Y_INT)).replace('##XYDATA=', '##XYDATA '));
write('arbitrary-y-units.jdx', jcamp({ yUnits: 'ARBITRARY UNITS' }, '(X++(Y..Y))', affnLines(X, Y_INT)));
write('missing-data-type.jdx', jcamp({ dataType: '' }, '(X++(Y..Y))', affnLines(X, Y_INT)));
write(
  'question-mark-value.jdx',
  jcamp(
    {},
    '(X++(Y..Y))',
    affnLines(
      X,
      Y_INT.map((v, i) => (i === 100 ? '?' : v)),
    ),
  ),
);
// A DUP count of about a billion on the first line: must be refused at once, not expanded.
write('dup-count-bomb.jdx', jcamp({}, '(X++(Y..Y))', [`${X[0]}${SQZ(Y_INT[0])}%s99999999`, ...difLines.slice(1)]));
{
  const block = (title: string) => [
    ...jcampHeader({ title }),
    '##XYDATA=(X++(Y..Y))',
    ...affnLines(X, Y_INT),
    '##END=',
  ];
  write(
    'two-spectra-link-block.jdx',
    [
      '##TITLE=Two spectra in one file',
      '##JCAMP-DX=5.01',
      '##DATA TYPE=LINK',
      '##BLOCKS=2',
      ...block('Drum 1'),
      ...block('Drum 2'),
      '##END=',
    ].join('\n') + '\n',
  );
}
write(
  'peak-table-only.jdx',
  [
    ...jcampHeader({ dataType: 'INFRARED PEAK TABLE', npoints: 4 }),
    '##PEAK TABLE=(XY..XY)',
    '2920,0.6 1730,0.9',
    '1450,0.3 1100,0.5',
    '##END=',
  ].join('\n') + '\n',
);
write('csv-named-jdx.jdx', csv('cm-1,A', X, A.map(r6)));
