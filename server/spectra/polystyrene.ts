/**
 * Instrument check: wavenumber scale against a polystyrene film.
 *
 * Positions and tolerances: Ph. Eur. 2.2.24, Table 2.2.24.-1 (5.0 text, see
 * ../shared/domain-facts.md section 1.1): 3060.0, 2849.5, 1942.9, 1601.2, 1583.0,
 * 1154.5, 1028.3 cm-1; FT instruments +-1.0 cm-1 for all seven; monochromators
 * +-1.5, +-2.0, +-1.5, then +-1.0. ATR accessories put these bands lower than the
 * transmission positions, so a site may instead use its own QA-approved
 * positions and tolerances. Each band maximum is located on the raw data to
 * sub-grid precision with the vertex of the parabola through the highest point
 * and its two neighbours.
 *
 * Resolution: for a film of about 35 um in transmission. Monochromators (Ph. Eur.
 * 5.0): %T(max near 2870) - %T(min at 2849.5) > 18 and %T(max near 1589) - %T(min at
 * 1583) > 10. FT instruments: A(2849.5) - A(2870) > 0.33 and A(1583) - A(1589) > 0.08
 * (Ph. Eur. 6.0+ text, from memory). Both depend on film thickness and cannot
 * apply to ATR spectra, whose bands are far weaker: in ATR mode the resolution
 * criterion is reported as not applicable, with the reason.
 */
import { parabolaVertex } from './peaks';
import type { Spectrum } from './types';
import { ENGINE_VERSION } from './version';

export interface PolystyreneBandSpec {
  nominal: number;
  tolerance: number;
}

export interface PolystyreneSpec {
  name: string;
  bands: PolystyreneBandSpec[];
  /** Which resolution criterion applies in transmission. */
  instrument: 'ft' | 'monochromator';
}

const POSITIONS = [3060.0, 2849.5, 1942.9, 1601.2, 1583.0, 1154.5, 1028.3];

export const PH_EUR_POLYSTYRENE_FT: PolystyreneSpec = {
  name: 'Ph. Eur. 2.2.24, FT instruments',
  instrument: 'ft',
  bands: POSITIONS.map((nominal) => ({ nominal, tolerance: 1.0 })),
};

export const PH_EUR_POLYSTYRENE_MONOCHROMATOR: PolystyreneSpec = {
  name: 'Ph. Eur. 2.2.24, monochromator instruments',
  instrument: 'monochromator',
  bands: POSITIONS.map((nominal, i) => ({ nominal, tolerance: [1.5, 2.0, 1.5, 1.0, 1.0, 1.0, 1.0][i] })),
};

export interface PolystyreneOptions {
  /** Default: Ph. Eur. FT column. */
  spec?: PolystyreneSpec;
  /** How the film was measured; ATR makes the resolution criterion not applicable. Default 'transmission'. */
  mode?: 'transmission' | 'atr';
  /** Half-width of the window searched around each expected position, cm-1 (default 5). */
  searchWindow?: number;
}

export interface PolystyreneBandResult {
  nominal: number;
  /** Sub-grid position of the band maximum, or null when no maximum lies in the window. */
  found: number | null;
  deviation: number | null;
  tolerance: number;
  ok: boolean;
}

export interface ResolutionCheck {
  name: string;
  value: number;
  limit: number;
  ok: boolean;
}

export interface PolystyreneResult {
  verdict: 'pass' | 'fail';
  spec: string;
  mode: 'transmission' | 'atr';
  bands: PolystyreneBandResult[];
  resolution: { applicable: boolean; reason: string | null; checks: ResolutionCheck[]; ok: boolean };
  engineVersion: string;
}

/** Sub-grid position and height of the maximum within [centre - w, centre + w], or null if the maximum sits on the window edge. */
export function locateMaximum(spectrum: Spectrum, centre: number, w: number): { x: number; y: number } | null {
  const { x, y } = spectrum;
  let best = -1;
  for (let i = 0; i < x.length; i++) {
    if (x[i] < centre - w || x[i] > centre + w) continue;
    if (best < 0 || y[i] > y[best]) best = i;
  }
  if (best <= 0 || best >= x.length - 1) return null;
  if (x[best - 1] < centre - w || x[best + 1] > centre + w) return null;
  return parabolaVertex(x[best - 1], y[best - 1], x[best], y[best], x[best + 1], y[best + 1]);
}

function valueAt(spectrum: Spectrum, v: number): number {
  const { x, y } = spectrum;
  let i = 0;
  while (i < x.length - 2 && x[i + 1] < v) i++;
  const t = (v - x[i]) / (x[i + 1] - x[i]);
  return y[i] + Math.max(0, Math.min(1, t)) * (y[i + 1] - y[i]);
}

function minimumIn(spectrum: Spectrum, from: number, to: number): number {
  let m = Infinity;
  for (let i = 0; i < spectrum.x.length; i++)
    if (spectrum.x[i] >= from && spectrum.x[i] <= to) m = Math.min(m, spectrum.y[i]);
  return m;
}

function resolutionChecks(spectrum: Spectrum, spec: PolystyreneSpec): ResolutionCheck[] {
  const a2849 = valueAt(spectrum, 2849.5);
  const a1583 = valueAt(spectrum, 1583.0);
  // The valleys next to the bands: lowest absorbance near 2870 and near 1589 cm-1.
  const a2870 = minimumIn(spectrum, 2860, 2880);
  const a1589 = minimumIn(spectrum, 1586, 1594);
  if (spec.instrument === 'ft') {
    const d1 = a2849 - a2870;
    const d2 = a1583 - a1589;
    return [
      { name: 'A(2849.5) - A(2870)', value: d1, limit: 0.33, ok: d1 > 0.33 },
      { name: 'A(1583) - A(1589)', value: d2, limit: 0.08, ok: d2 > 0.08 },
    ];
  }
  const t = (a: number) => 100 * 10 ** -a;
  const d1 = t(a2870) - t(a2849);
  const d2 = t(a1589) - t(a1583);
  return [
    { name: '%T(2870) - %T(2849.5)', value: d1, limit: 18, ok: d1 > 18 },
    { name: '%T(1589) - %T(1583)', value: d2, limit: 10, ok: d2 > 10 },
  ];
}

export function checkPolystyrene(spectrum: Spectrum, options: PolystyreneOptions = {}): PolystyreneResult {
  const spec = options.spec ?? PH_EUR_POLYSTYRENE_FT;
  const mode = options.mode ?? 'transmission';
  const w = options.searchWindow ?? 5;
  const bands = spec.bands.map((b): PolystyreneBandResult => {
    const peak = locateMaximum(spectrum, b.nominal, w);
    if (!peak) return { nominal: b.nominal, found: null, deviation: null, tolerance: b.tolerance, ok: false };
    const deviation = peak.x - b.nominal;
    // Compare at 0.01 cm-1, the precision reported, so 1.0004 does not fail a 1.0 tolerance.
    const ok = Math.round(Math.abs(deviation) * 100) <= Math.round(b.tolerance * 100);
    return { nominal: b.nominal, found: peak.x, deviation, tolerance: b.tolerance, ok };
  });
  const resolution =
    mode === 'atr'
      ? {
          applicable: false,
          reason:
            'The resolution criteria are defined for a film of about 35 um in transmission; ATR band intensities cannot meet or test them.',
          checks: [],
          ok: true,
        }
      : (() => {
          const checks = resolutionChecks(spectrum, spec);
          return { applicable: true, reason: null, checks, ok: checks.every((c) => c.ok) };
        })();
  const verdict = bands.every((b) => b.ok) && resolution.ok ? 'pass' : 'fail';
  return { verdict, spec: spec.name, mode, bands, resolution, engineVersion: ENGINE_VERSION };
}
