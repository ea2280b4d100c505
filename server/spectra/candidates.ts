/**
 * Ranking of group-frequency candidates by the other bands of the same spectrum.
 *
 * A correlation table looked up band by band (assignBand) offers every group whose range
 * holds the band: a nitro group for povidone's C-N band, an alkene for the amide I band of
 * a polyamide, an aromatic ring for a stearate's carboxylate band. A chemist rules most of
 * these out by looking at the rest of the spectrum: an alkene C=C needs its =C-H stretch
 * above 3000 cm-1, an aromatic ring its aromatic C-H stretch, a nitro group its second
 * strong NO2 band, an amide II band an amide I band; an amide I band is confirmed by amide II
 * and N-H, a carboxylate's asymmetric stretch by its symmetric partner, a carbohydrate's
 * C-O bands by the broad O-H band and the glycosidic band.
 *
 * Each rule below names partner bands in a wavenumber range:
 *  - requires: without such a band the group is unlikely; it ranks after every candidate
 *    whose requirements are met;
 *  - supportedBy: each partner found adds its prominence (fraction of the strongest band)
 *    to the candidate's support; more and stronger support ranks higher.
 * Order: candidates with their required partners, then the fingerprint region (a
 * molecule-specific band is a more honest reading than a group whose partner is absent),
 * then candidates lacking a required partner; within each, a group whose usual shape
 * contradicts the band's comes later, then more support first, then assignBand's order
 * (range containment, shape, narrower range).
 * The partner pairs are textbook group-frequency knowledge (Silverstein, Webster & Kiemle;
 * Pavia et al.), from memory, like the table itself (group-frequencies.data.ts). The result
 * is a list of candidates for a QA manager's information, never an assignment.
 */
import { assignBand, BROAD_BAND_WIDTH, shapeOf } from './group-frequencies';
import type { GroupFrequency } from './group-frequencies.data';

/** A band of the spectrum: position, and prominence (fraction of the strongest band) and width where known. */
export interface SpectrumBand {
  position: number;
  prominence?: number;
  width?: number;
}

interface Partner {
  /** What the partner band is, in words. */
  what: string;
  from: number;
  to: number;
  /** Table entries the partner band stands for: it counts only when one of them is its own best candidate. */
  ids: string[];
  /** Only broad partners count (full width at half height of at least BROAD_BAND_WIDTH). */
  broad?: boolean;
  /** The partner must reach this fraction of the candidate band's own prominence. */
  relativeProminence?: number;
  /** The partner must reach this prominence (fraction of the strongest band). */
  minProminence?: number;
}

interface Rule {
  /** Every one of these partners must be present. */
  requires?: Partner[];
  /** At least one of these partners must be present. */
  requiresOneOf?: Partner[];
  supportedBy?: Partner[];
}

const AROMATIC_CH: Partner = { what: 'aromatic C-H stretch', from: 3000, to: 3100, ids: ['ch-arene'] };
const ALKENE_CH: Partner = { what: '=C-H stretch', from: 3010, to: 3100, ids: ['ch-alkene'] };
const ALKANE_CH: Partner = { what: 'alkane C-H stretch', from: 2840, to: 2970, ids: ['ch-alkane'] };
// Amide I and II of proteins and polyamides spread wider than the table's ranges (amide I 1600-1700,
// e.g. beta-sheet silk near 1620 cm-1; amide II 1500-1580).
const AMIDE_I: Partner = { what: 'amide I band', from: 1600, to: 1700, ids: ['amide-1'] };
const AMIDE_II: Partner = { what: 'amide II band', from: 1500, to: 1580, ids: ['amide-2'] };
const NH_AMIDE: Partner = { what: 'N-H stretch', from: 3170, to: 3370, ids: ['nh-amide', 'nh-amine'] };
const BROAD_OH: Partner = {
  what: 'broad hydrogen-bonded O-H band',
  from: 3200,
  to: 3550,
  ids: ['oh-hbonded'],
  broad: true,
};
// Carbohydrates (starch) put their strongest C-O band down to about 990 cm-1.
const CARBOHYDRATE_CO: Partner = {
  what: 'strong C-O band (980-1160 cm-1)',
  from: 980,
  to: 1160,
  ids: ['c-o', 'fingerprint'],
  minProminence: 0.3,
};
const STRONG_CO: Partner = {
  what: 'strong C-O stretch',
  from: 980,
  to: 1300,
  ids: ['c-o', 'fingerprint'],
  minProminence: 0.3,
};
const RING_HIGH: Partner = {
  what: 'aromatic ring C=C stretch near 1600 cm-1',
  from: 1580,
  to: 1615,
  ids: ['cc-arene'],
};
const RING_LOW: Partner = { what: 'aromatic ring C=C stretch near 1500 cm-1', from: 1485, to: 1520, ids: ['cc-arene'] };
// Nitro groups show two strong NO2 stretching bands (textbook, from memory).
const nitro = (what: string, from: number, to: number, id: string): Partner => ({
  what,
  from,
  to,
  ids: [id],
  relativeProminence: 0.5,
  minProminence: 0.3,
});

/** Partner rules by table entry id (group-frequencies.data.ts). */
export const CANDIDATE_RULES: Readonly<Record<string, Rule>> = {
  'ch-alkene': { requires: [{ what: 'C=C stretch', from: 1620, to: 1680, ids: ['cc-alkene'] }] },
  'cc-alkene': { requires: [ALKENE_CH] },
  'ch-arene': { requires: [{ what: 'aromatic ring C=C stretch', from: 1440, to: 1610, ids: ['cc-arene'] }] },
  'cc-arene': { requiresOneOf: [AROMATIC_CH, RING_HIGH, RING_LOW] },
  'ar-oop': { requiresOneOf: [AROMATIC_CH, RING_HIGH, RING_LOW] },
  'ch2-rock': {
    requires: [ALKANE_CH],
    supportedBy: [{ what: 'CH2 scissoring', from: 1440, to: 1475, ids: ['ch-bend-ch2'] }],
  },
  'ch-bend-ch2': { supportedBy: [ALKANE_CH] },
  'ch-bend-ch3': { supportedBy: [ALKANE_CH] },
  'no2-asym': { requires: [nitro('strong NO2 symmetric stretch', 1290, 1365, 'no2-sym')] },
  'no2-sym': { requires: [nitro('strong NO2 asymmetric stretch', 1475, 1550, 'no2-asym')] },
  'amide-1': { supportedBy: [AMIDE_II, NH_AMIDE] },
  'amide-2': { requires: [AMIDE_I], supportedBy: [NH_AMIDE] },
  'amide-3': { requires: [AMIDE_I], supportedBy: [AMIDE_II] },
  'nh-amide': { supportedBy: [AMIDE_I, AMIDE_II] },
  'coo-asym': { requires: [{ what: 'carboxylate symmetric stretch', from: 1360, to: 1450, ids: ['coo-sym'] }] },
  'coo-sym': {
    requires: [
      { what: 'carboxylate asymmetric stretch', from: 1540, to: 1620, ids: ['coo-asym'], relativeProminence: 0.5 },
    ],
  },
  // The O-H stretch of water is stronger than its bend (ATR halves it at most): a strong band near
  // 1650 cm-1 beside a weak O-H band is not water (textbook, from memory).
  'water-bend': { requires: [{ ...BROAD_OH, relativeProminence: 0.5 }] },
  'oh-hbonded': { supportedBy: [STRONG_CO] },
  'oh-acid': { requires: [{ what: 'acid C=O stretch', from: 1680, to: 1725, ids: ['co-acid', 'co-conjugated'] }] },
  'co-acid': {
    supportedBy: [{ what: 'very broad acid O-H band', from: 2500, to: 3300, ids: ['oh-acid'], broad: true }],
  },
  'co-ester': { supportedBy: [{ ...STRONG_CO, from: 1150 }] },
  'ch-alkyne': { requires: [{ what: 'C≡C stretch', from: 2100, to: 2260, ids: ['cc-alkyne'] }] },
  'cc-alkyne': { requires: [{ what: '≡C-H stretch', from: 3270, to: 3330, ids: ['ch-alkyne'] }] },
  'ch-aldehyde': { requires: [{ what: 'aldehyde C=O stretch', from: 1720, to: 1740, ids: ['co-aldehyde'] }] },
  'co-aldehyde': { requires: [{ what: 'aldehyde C-H stretch', from: 2700, to: 2830, ids: ['ch-aldehyde'] }] },
  'co-anhydride-hi': {
    requires: [{ what: 'second anhydride C=O band', from: 1740, to: 1775, ids: ['co-anhydride-lo'] }],
  },
  'co-anhydride-lo': {
    requires: [{ what: 'second anhydride C=O band', from: 1800, to: 1840, ids: ['co-anhydride-hi'] }],
  },
  glycosidic: { requires: [CARBOHYDRATE_CO, BROAD_OH] },
  'c-o': { supportedBy: [BROAD_OH, { what: 'ester C=O stretch', from: 1735, to: 1750, ids: ['co-ester'] }] },
};

export interface RankedCandidate {
  group: GroupFrequency;
  /** Partner bands found, in words with their positions. */
  support: string[];
  /** Required partner bands not found, in words. */
  missing: string[];
  /** Sum of the prominences of the supporting partner bands. */
  weight: number;
}

function findPartner(
  p: Partner,
  self: SpectrumBand,
  bands: SpectrumBand[],
  bestOf: Map<SpectrumBand, string> | null,
): SpectrumBand | null {
  let best: SpectrumBand | null = null;
  for (const b of bands) {
    if (b === self || Math.abs(b.position - self.position) < 1e-9) continue;
    if (b.position < p.from || b.position > p.to) continue;
    if (p.broad && !(b.width !== undefined && b.width >= BROAD_BAND_WIDTH)) continue;
    const prom = b.prominence ?? 0;
    if (p.minProminence !== undefined && prom < p.minProminence) continue;
    if (p.relativeProminence !== undefined && prom < p.relativeProminence * (self.prominence ?? 0)) continue;
    if (bestOf && !p.ids.includes(bestOf.get(b) ?? '')) continue;
    if (!best || prom > (best.prominence ?? 0)) best = b;
  }
  return best;
}

function shapeAgainst(band: SpectrumBand, g: GroupFrequency): number {
  const shape = band.width !== undefined ? shapeOf(band.width) : undefined;
  return shape && g.shape !== 'any' && g.shape !== shape ? 1 : 0;
}

function rankOne(
  band: SpectrumBand,
  bands: SpectrumBand[],
  bestOf: Map<SpectrumBand, string> | null,
): RankedCandidate[] {
  const base = assignBand(band.position, band.width !== undefined ? shapeOf(band.width) : undefined);
  const ranked = base.map((group, order) => {
    const rule = CANDIDATE_RULES[group.id] ?? {};
    const missing: string[] = [];
    const support: string[] = [];
    let weight = 0;
    for (const p of rule.requires ?? []) {
      const hit = findPartner(p, band, bands, bestOf);
      if (!hit) missing.push(`${p.what} (${p.from}-${p.to} cm-1)`);
      else {
        support.push(`${p.what} at ${hit.position.toFixed(0)} cm-1`);
        weight += hit.prominence ?? 0;
      }
    }
    if (rule.requiresOneOf?.length) {
      let any = false;
      for (const p of rule.requiresOneOf) {
        const hit = findPartner(p, band, bands, bestOf);
        if (!hit) continue;
        any = true;
        support.push(`${p.what} at ${hit.position.toFixed(0)} cm-1`);
        weight += hit.prominence ?? 0;
      }
      if (!any)
        missing.push(`one of: ${rule.requiresOneOf.map((p) => `${p.what} (${p.from}-${p.to} cm-1)`).join('; ')}`);
    }
    for (const p of rule.supportedBy ?? []) {
      const hit = findPartner(p, band, bands, bestOf);
      if (hit) {
        support.push(`${p.what} at ${hit.position.toFixed(0)} cm-1`);
        weight += hit.prominence ?? 0;
      }
    }
    return { candidate: { group, support, missing, weight }, order };
  });
  // Candidates with their required partners first, then the fingerprint region, then candidates
  // lacking a required partner; within each, shape agreement, support, and the table order.
  const tier = (c: RankedCandidate) => (c.missing.length ? 2 : c.group.id === 'fingerprint' ? 1 : 0);
  ranked.sort((a, b) => {
    const ta = tier(a.candidate);
    const tb = tier(b.candidate);
    if (ta !== tb) return ta - tb;
    const sa = shapeAgainst(band, a.candidate.group);
    const sb = shapeAgainst(band, b.candidate.group);
    if (sa !== sb) return sa - sb;
    if (a.candidate.weight !== b.candidate.weight) return b.candidate.weight - a.candidate.weight;
    return a.order - b.order;
  });
  return ranked.map((r) => r.candidate);
}

/**
 * The table's candidates for `band`, ranked by how well the other bands of the spectrum
 * (`bands`, which may include `band` itself) agree with each. Two passes: the first ranks
 * every band on the positions of its partners alone; in the second a partner band counts
 * only when the first pass made it what the rule expects (so the amide II band of a
 * polyamide is not taken for a carboxylate's or a nitro group's partner).
 */
export function rankCandidates(band: SpectrumBand, bands: SpectrumBand[]): RankedCandidate[] {
  const all = bands.includes(band) ? bands : [...bands, band];
  const bestOf = new Map<SpectrumBand, string>();
  for (const b of all) bestOf.set(b, rankOne(b, all, null)[0]?.group.id ?? '');
  return rankOne(band, all, bestOf);
}
