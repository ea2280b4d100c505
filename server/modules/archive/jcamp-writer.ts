/**
 * Writes a spectrum as JCAMP-DX 4.24 (McDonald and Wilks, Applied Spectroscopy 42 (1988) 151)
 * with AFFN data in the usual (X++(Y..Y)) form: lines of an abscissa check value and ordinates,
 * each ordinate in the shortest decimal form that reads back to the same double (ECMAScript
 * Number to String, written without exponent), XFACTOR and YFACTOR 1, so readers get Drumline's y values exactly. The form
 * defines x as FIRSTX + i (LASTX - FIRSTX) / (NPOINTS - 1): the writer refuses a spectrum whose
 * x axis is not evenly spaced to within 1 % of a step (the form could not hold it), and readers
 * get the even axis, which differs from the raw file's x only by the raw file's rounding. The spectrum written is the one Drumline judged: wavenumber in 1/CM ascending,
 * y absorbance-like as read from the raw file (the raw file itself stays the primary record and
 * is archived beside it). Measurement metadata go into the standard labels (TITLE, ORIGIN, OWNER,
 * LONGDATE, SPECTROMETER/DATA SYSTEM, SAMPLING PROCEDURE, RESOLUTION) and Drumline's own
 * user-defined labels (`##$DRUMLINE ...`, the standard's form for private labels).
 */
import type { Spectrum } from '../../spectra';

export interface JcampMeta {
  title: string;
  /** Who made the data (the site). */
  origin: string;
  owner: string;
  /** When the raw file was measured or uploaded. */
  measuredAt: Date;
  instrument?: string | null;
  sampling?: string | null;
  /** Private labels, written as ##$DRUMLINE <KEY>=value (KEY upper case, letters, digits, spaces). */
  drumline: Record<string, string | number | null | undefined>;
}

const Y_UNITS: Record<Spectrum['meta']['yKind'], string> = {
  absorbance: 'ABSORBANCE',
  'log-inverse-reflectance': 'LOG(1/R)',
  'kubelka-munk': 'KUBELKA-MUNK',
};

/** One line of label text: no line breaks, no "##" that would start a label, at most 200 characters. */
function clean(v: unknown): string {
  return String(v ?? '')
    .replace(/[\r\n]+/g, ' ')
    .replace(/##/g, '# #')
    .replace(/[^\x20-\x7e\u00a0-\uffff]/g, '')
    .slice(0, 200);
}

const two = (n: number) => String(n).padStart(2, '0');

/** ##LONGDATE in the 4.24 form YYYY/MM/DD HH:MM:SS (UTC, stated). */
function longDate(d: Date): string {
  return `${d.getUTCFullYear()}/${two(d.getUTCMonth() + 1)}/${two(d.getUTCDate())} ${two(d.getUTCHours())}:${two(
    d.getUTCMinutes(),
  )}:${two(d.getUTCSeconds())} +0000`;
}

export class UnevenAxisError extends Error {}

/**
 * The shortest decimal that reads back to the same double, always in plain positional notation
 * (AFFN readers do not all accept an exponent): "1.5e-7" becomes "0.00000015".
 */
export function affn(v: number): string {
  const s = String(v);
  const m = /^(-?)(\d)(?:\.(\d+))?e([+-]\d+)$/.exec(s);
  if (!m) return s;
  const [, sign, lead, frac = '', expText] = m;
  const exp = Number(expText);
  const digits = lead + frac;
  if (exp < 0) return `${sign}0.${'0'.repeat(-exp - 1)}${digits}`;
  const intLen = exp + 1;
  return intLen >= digits.length
    ? `${sign}${digits}${'0'.repeat(intLen - digits.length)}`
    : `${sign}${digits.slice(0, intLen)}.${digits.slice(intLen)}`;
}

export function writeJcamp(s: Spectrum, meta: JcampMeta): string {
  const n = s.x.length;
  if (n < 2 || s.y.length !== n) throw new Error('a spectrum needs at least two points and as many y as x');
  let minY = Infinity;
  let maxY = -Infinity;
  for (const v of s.y) {
    if (!Number.isFinite(v)) throw new Error('a spectrum value is not a finite number');
    if (v < minY) minY = v;
    if (v > maxY) maxY = v;
  }
  const lines = [
    `##TITLE=${clean(meta.title)}`,
    '##JCAMP-DX=4.24',
    '##DATA TYPE=INFRARED SPECTRUM',
    '##DATA CLASS=XYDATA',
    `##ORIGIN=${clean(meta.origin)}`,
    `##OWNER=${clean(meta.owner)}`,
    `##LONGDATE=${longDate(meta.measuredAt)}`,
  ];
  if (meta.instrument) lines.push(`##SPECTROMETER/DATA SYSTEM=${clean(meta.instrument)}`);
  if (meta.sampling) lines.push(`##SAMPLING PROCEDURE=${clean(meta.sampling)}`);
  if (s.meta.resolution) lines.push(`##RESOLUTION=${s.meta.resolution}`);
  lines.push(`##$DRUMLINE ORIGINAL FORMAT=${clean(s.meta.format)}`);
  lines.push(`##$DRUMLINE ORIGINAL X UNITS=${clean(s.meta.originalXUnits)}`);
  lines.push(`##$DRUMLINE ORIGINAL Y UNITS=${clean(s.meta.originalYUnits)}`);
  for (const [k, v] of Object.entries(meta.drumline))
    if (v !== null && v !== undefined)
      lines.push(`##$DRUMLINE ${clean(k.toUpperCase()).replace(/[^A-Z0-9 ]/g, ' ')}=${clean(v)}`);
  lines.push(
    '##XUNITS=1/CM',
    `##YUNITS=${Y_UNITS[s.meta.yKind]}`,
    '##XFACTOR=1',
    '##YFACTOR=1',
    `##FIRSTX=${affn(s.x[0])}`,
    `##LASTX=${affn(s.x[n - 1])}`,
    `##FIRSTY=${affn(s.y[0])}`,
    `##MINY=${affn(minY)}`,
    `##MAXY=${affn(maxY)}`,
    `##NPOINTS=${n}`,
    '##XYDATA=(X++(Y..Y))',
  );
  const step = (s.x[n - 1] - s.x[0]) / (n - 1);
  const xAt = (i: number) => s.x[0] + i * step;
  for (let i = 0; i < n; i++)
    if (Math.abs(s.x[i] - xAt(i)) > Math.abs(step) * 0.01)
      throw new UnevenAxisError(
        `The x axis is not evenly spaced (point ${i + 1} lies ${Math.abs(s.x[i] - xAt(i)).toPrecision(3)} cm-1 off the even grid); JCAMP-DX (X++(Y..Y)) cannot hold it. Use the raw file.`,
      );
  for (let i = 0; i < n;) {
    let line = affn(xAt(i));
    let k = 0;
    // Up to 80 characters a line (JCAMP-DX 4.24), at least one ordinate.
    while (i < n && (k === 0 || line.length + 1 + affn(s.y[i]).length <= 80)) {
      line += ' ' + affn(s.y[i]);
      i++;
      k++;
    }
    lines.push(line);
  }
  lines.push('##END=');
  return lines.join('\r\n') + '\r\n';
}
