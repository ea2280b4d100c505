/**
 * Group-frequency assignment of a band from the correlation table in
 * group-frequencies.data.ts (standard textbook ranges, from memory).
 */
import {
  type BandShape,
  GROUP_FREQUENCIES,
  GROUP_FREQUENCY_SOURCE,
  type GroupFrequency,
} from './group-frequencies.data';

export { GROUP_FREQUENCIES, GROUP_FREQUENCY_SOURCE };
export type { BandShape, GroupFrequency };

/**
 * A band at least this wide (full width at half height, cm-1) is called broad, in
 * explanations and in band concordance: only a broad band's shift tolerance may be
 * widened by its width (bands.ts).
 */
export const BROAD_BAND_WIDTH = 80;

export function shapeOf(widthCm1: number): BandShape {
  return widthCm1 >= BROAD_BAND_WIDTH ? 'broad' : 'sharp';
}

/** Textbook ranges are approximate: a band this close outside a range still counts as a candidate. */
export const RANGE_MARGIN = 10;

/**
 * Table entries that could explain a band at this wavenumber, most likely first:
 * entries whose usual shape contradicts the given shape last (a sharp band is not
 * the very broad acid O-H); then ranges that contain the wavenumber before ranges
 * that only come within RANGE_MARGIN; then entries of exactly the given shape;
 * then narrower (more specific) ranges. The fingerprint region always comes last.
 */
export function assignBand(wavenumber: number, shape?: BandShape): GroupFrequency[] {
  const hits = GROUP_FREQUENCIES.filter(
    (g) => wavenumber >= g.from - RANGE_MARGIN && wavenumber <= g.to + RANGE_MARGIN,
  );
  const rank = (g: GroupFrequency): number[] => [
    g.id === 'fingerprint' ? 1 : 0,
    shape && g.shape !== 'any' && g.shape !== shape ? 1 : 0,
    wavenumber >= g.from && wavenumber <= g.to ? 0 : 1,
    shape && g.shape === shape ? 0 : 1,
    g.to - g.from,
  ];
  return [...hits].sort((a, b) => {
    const ra = rank(a);
    const rb = rank(b);
    for (let i = 0; i < ra.length; i++) if (ra[i] !== rb[i]) return ra[i] - rb[i];
    return a.id.localeCompare(b.id);
  });
}

/** How many candidate assignments describeAssignment names. */
export const DESCRIBED_CANDIDATES = 2;

/**
 * The likely assignments in words, e.g. "C=O stretch, ester (1735-1750 cm-1, strong)".
 * A correlation table gives candidates, not certainty, so up to two are named,
 * joined by "or"; the fingerprint region is named only when nothing else fits.
 */
export function describeAssignment(wavenumber: number, shape?: BandShape): string {
  const all = assignBand(wavenumber, shape);
  const specific = all.filter((g) => g.id !== 'fingerprint' && (!shape || g.shape === 'any' || g.shape === shape));
  const fallback = all.find((g) => g.id === 'fingerprint') ?? all[0];
  const chosen = specific.length ? specific.slice(0, DESCRIBED_CANDIDATES) : fallback ? [fallback] : [];
  if (!chosen.length) return 'no common group frequency';
  const text = chosen.map((g) => `${g.group} (${g.from}-${g.to} cm-1, ${g.intensity})`).join(' or ');
  return specific.length && all.some((g) => g.id === 'fingerprint') && wavenumber <= 1500
    ? `${text}; fingerprint region`
    : text;
}
