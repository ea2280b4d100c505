/**
 * Correlation table of infrared group frequencies (mid-IR, cm-1), kept as data.
 *
 * Source: the standard ranges of spectroscopy textbooks - Silverstein, Webster &
 * Kiemle, "Spectrometric Identification of Organic Compounds", and Pavia, Lampman,
 * Kriz & Vyvyan, "Introduction to Spectroscopy" - written down FROM MEMORY, as
 * collected in ../shared/domain-facts.md section 9; not checked against the books
 * page by page. Conjugation lowers C=O by about 20-30 cm-1; small rings raise it.
 * Edit this table (not the code) to refine an entry; keep the source line current.
 */

export const GROUP_FREQUENCY_SOURCE =
  'Standard IR correlation tables (Silverstein, Webster & Kiemle, Spectrometric Identification of Organic Compounds; ' +
  'Pavia et al., Introduction to Spectroscopy), from memory.';

export type BandShape = 'sharp' | 'broad';

export interface GroupFrequency {
  id: string;
  /** Vibration and chemical group, in words. */
  group: string;
  /** Range in cm-1, from < to. */
  from: number;
  to: number;
  /** Usual intensity: strong, medium, weak or variable. */
  intensity: 'strong' | 'medium' | 'weak' | 'variable' | 'medium-strong' | 'weak-medium';
  /** Usual shape; 'any' when the shape does not tell the group apart. */
  shape: BandShape | 'any';
  /** What the band usually means in practice. */
  meaning?: string;
}

export const GROUP_FREQUENCIES: readonly GroupFrequency[] = [
  {
    id: 'oh-free',
    group: 'O-H stretch, free (non-hydrogen-bonded) alcohol',
    from: 3580,
    to: 3650,
    intensity: 'medium',
    shape: 'sharp',
  },
  {
    id: 'oh-hbonded',
    group: 'O-H stretch, hydrogen-bonded (alcohols, phenols, water)',
    from: 3200,
    to: 3550,
    intensity: 'strong',
    shape: 'broad',
    meaning: 'hydrogen-bonded O-H, often water (moisture) or an alcohol',
  },
  {
    id: 'oh-acid',
    group: 'O-H stretch of a carboxylic acid (dimer)',
    from: 2500,
    to: 3300,
    intensity: 'strong',
    shape: 'broad',
    meaning: 'a carboxylic acid; the very broad band runs under the C-H stretches',
  },
  {
    id: 'nh-amine',
    group: 'N-H stretch, amine or amide (primary: two bands, secondary: one)',
    from: 3300,
    to: 3500,
    intensity: 'medium',
    shape: 'any',
  },
  {
    id: 'nh-amide',
    group: 'N-H stretch, hydrogen-bonded amide',
    from: 3170,
    to: 3370,
    intensity: 'medium',
    shape: 'any',
    meaning: 'an amide (e.g. polyamides, proteins)',
  },
  {
    id: 'ch-alkyne',
    group: '≡C-H stretch, terminal alkyne',
    from: 3270,
    to: 3330,
    intensity: 'strong',
    shape: 'sharp',
  },
  { id: 'ch-alkene', group: '=C-H stretch, alkene', from: 3010, to: 3100, intensity: 'medium', shape: 'sharp' },
  {
    id: 'ch-arene',
    group: 'C-H stretch, aromatic ring',
    from: 3000,
    to: 3100,
    intensity: 'weak-medium',
    shape: 'sharp',
  },
  {
    id: 'ch-alkane',
    group: 'C-H stretch, alkane (CH3, CH2)',
    from: 2850,
    to: 2960,
    intensity: 'strong',
    shape: 'sharp',
  },
  {
    id: 'ch-aldehyde',
    group: 'C-H stretch of an aldehyde (Fermi pair near 2820 and 2720)',
    from: 2700,
    to: 2830,
    intensity: 'weak-medium',
    shape: 'sharp',
  },
  {
    id: 'co2',
    group: 'atmospheric carbon dioxide (O=C=O stretch)',
    from: 2280,
    to: 2400,
    intensity: 'variable',
    shape: 'sharp',
    meaning: 'a change in the air between background and sample, not the sample itself',
  },
  { id: 'cn-nitrile', group: 'C≡N stretch, nitrile', from: 2220, to: 2260, intensity: 'medium', shape: 'sharp' },
  {
    id: 'cc-alkyne',
    group: 'C≡C stretch, alkyne (absent when symmetric)',
    from: 2100,
    to: 2260,
    intensity: 'weak',
    shape: 'sharp',
  },
  {
    id: 'co-anhydride-hi',
    group: 'C=O stretch, anhydride (upper band)',
    from: 1800,
    to: 1840,
    intensity: 'strong',
    shape: 'sharp',
  },
  {
    id: 'co-acid-chloride',
    group: 'C=O stretch, acid chloride',
    from: 1785,
    to: 1815,
    intensity: 'strong',
    shape: 'sharp',
  },
  {
    id: 'co-anhydride-lo',
    group: 'C=O stretch, anhydride (lower band)',
    from: 1740,
    to: 1775,
    intensity: 'strong',
    shape: 'sharp',
  },
  {
    id: 'co-ester',
    group: 'C=O stretch, ester',
    from: 1735,
    to: 1750,
    intensity: 'strong',
    shape: 'sharp',
    meaning: 'an ester carbonyl',
  },
  { id: 'co-aldehyde', group: 'C=O stretch, aldehyde', from: 1720, to: 1740, intensity: 'strong', shape: 'sharp' },
  { id: 'co-ketone', group: 'C=O stretch, ketone', from: 1705, to: 1725, intensity: 'strong', shape: 'sharp' },
  { id: 'co-acid', group: 'C=O stretch, carboxylic acid', from: 1700, to: 1725, intensity: 'strong', shape: 'sharp' },
  {
    id: 'co-conjugated',
    group: 'C=O stretch, conjugated or aromatic ester, ketone or acid',
    from: 1680,
    to: 1725,
    intensity: 'strong',
    shape: 'sharp',
  },
  {
    id: 'amide-1',
    group: 'C=O stretch, amide (amide I)',
    from: 1630,
    to: 1690,
    intensity: 'strong',
    shape: 'any',
    meaning: 'an amide carbonyl (amide I)',
  },
  { id: 'amide-2', group: 'N-H bend, amide (amide II)', from: 1515, to: 1640, intensity: 'medium', shape: 'any' },
  {
    id: 'coo-asym',
    group: 'COO- asymmetric stretch, carboxylate salt',
    from: 1540,
    to: 1620,
    intensity: 'strong',
    shape: 'any',
    meaning: 'a carboxylate salt (e.g. a stearate), with its symmetric partner near 1360-1450 cm-1',
  },
  {
    id: 'water-bend',
    group: 'H-O-H bend of water',
    from: 1590,
    to: 1660,
    intensity: 'medium',
    shape: 'any',
    meaning: 'water (moisture), usually together with a broad band near 3400 cm-1',
  },
  { id: 'cc-alkene', group: 'C=C stretch, alkene', from: 1620, to: 1680, intensity: 'weak-medium', shape: 'sharp' },
  {
    id: 'cc-arene',
    group: 'C=C stretch of an aromatic ring (bands near 1600, 1580, 1500, 1450)',
    from: 1440,
    to: 1610,
    intensity: 'medium',
    shape: 'sharp',
  },
  {
    id: 'no2-asym',
    group: 'NO2 asymmetric stretch, nitro compound',
    from: 1475,
    to: 1550,
    intensity: 'strong',
    shape: 'sharp',
  },
  {
    id: 'ch-bend-ch2',
    group: 'C-H bend, CH2 scissoring (and CH3 asymmetric bend)',
    from: 1440,
    to: 1475,
    intensity: 'medium',
    shape: 'sharp',
  },
  {
    id: 'ch-bend-ch3',
    group: 'C-H bend, CH3 symmetric ("umbrella")',
    from: 1370,
    to: 1385,
    intensity: 'medium',
    shape: 'sharp',
  },
  {
    id: 'coo-sym',
    group: 'COO- symmetric stretch, carboxylate salt',
    from: 1360,
    to: 1450,
    intensity: 'medium-strong',
    shape: 'any',
  },
  {
    id: 'amide-3',
    group: 'C-N stretch and N-H bend, amide (amide III region)',
    from: 1230,
    to: 1310,
    intensity: 'medium',
    shape: 'any',
  },
  {
    id: 'no2-sym',
    group: 'NO2 symmetric stretch, nitro compound',
    from: 1290,
    to: 1365,
    intensity: 'strong',
    shape: 'sharp',
  },
  {
    id: 'ch2-rock',
    group: 'CH2 rocking of a chain of four or more CH2 groups',
    from: 715,
    to: 730,
    intensity: 'medium',
    shape: 'sharp',
    meaning: 'a long hydrocarbon chain (fatty acids and their salts, polyethylene, waxes)',
  },
  {
    id: 'c-o',
    group: 'C-O stretch (alcohols, ethers, esters)',
    from: 1000,
    to: 1300,
    intensity: 'strong',
    shape: 'any',
  },
  {
    id: 'glycosidic',
    group: 'C-O-C and C1-H deformation at the glycosidic link of carbohydrates (beta near 895, alpha near 845 cm-1)',
    from: 840,
    to: 925,
    intensity: 'weak-medium',
    shape: 'sharp',
    meaning: 'a sugar or polysaccharide skeleton (cellulose, starch, lactose)',
  },
  {
    id: 'ar-oop',
    group: 'aromatic C-H out-of-plane bend (pattern tells the ring substitution)',
    from: 675,
    to: 900,
    intensity: 'strong',
    shape: 'sharp',
  },
  {
    id: 'fingerprint',
    group: 'fingerprint region (skeletal vibrations, specific to the molecule)',
    from: 400,
    to: 1500,
    intensity: 'variable',
    shape: 'any',
    meaning: 'a molecule-specific band; differences here are the main basis of identification',
  },
];
