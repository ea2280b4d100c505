/**
 * A maximum-size upload made from a real spectrum: the nylon 6,6 ATR-FTIR sample of
 * ../shared/reference-data (1 cm-1 spacing) interpolated linearly onto a grid so fine that the CSV
 * file just fits under the upload limit (about a million points; an instrument exporting at its
 * finest data spacing writes files of this kind). The spectrum keeps its shape, so it is scored
 * like the original. Used by the upload API tests and the health-latency benchmark.
 */
import { dataFile, FIBRES } from '../../db/seeds/testing-library';

/** CSV bytes of the interpolated spectrum, at most `maxBytes` long. */
export function bigSpectrumCsv(maxBytes: number, source = FIBRES.nylon66Samples[0]): Buffer {
  const text = dataFile(source).buffer.toString('utf8');
  const rows = text
    .split(/\r?\n/)
    .slice(1)
    .filter(Boolean)
    .map((l) => l.split(',').map(Number));
  const x = rows.map((r) => r[0]);
  const y = rows.map((r) => r[1]);
  const header = 'wavenumber_cm-1,absorbance\n';
  // one line is "1234.567890,0.1234567\n": at most 23 bytes
  const points = Math.floor((maxBytes - header.length) / 23);
  const from = x[0];
  const to = x[x.length - 1];
  const step = (to - from) / (points - 1);
  const parts: string[] = [header];
  let j = 0;
  for (let i = 0; i < points; i++) {
    const xi = i === points - 1 ? to : from + i * step;
    while (j < x.length - 2 && x[j + 1] < xi) j++;
    const t = (xi - x[j]) / (x[j + 1] - x[j]);
    const yi = y[j] + t * (y[j + 1] - y[j]);
    parts.push(`${xi.toFixed(6)},${yi.toFixed(7)}\n`);
  }
  const out = Buffer.from(parts.join(''), 'utf8');
  if (out.length > maxBytes) throw new Error(`big spectrum is ${out.length} bytes, above ${maxBytes}`);
  return out;
}
