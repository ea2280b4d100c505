/**
 * Ranking of group-frequency candidates by the other bands of the spectrum (issue 18 item 4, the engine
 * part): the band-by-band table lookup offers alkenes for an amide I band, nitro groups for an amide II
 * band or povidone, aromatic rings for a stearate; ranked by partner bands it does not.
 * Expected assignments: textbook group frequencies (Silverstein, Webster & Kiemle; Pavia et al.), from
 * memory, on real spectra of ../shared/reference-data:
 *  - amides: atr-ftir-fibres nylon 6, nylon 6,6, silk, wool, para-aramid (FasTEX-KCL, Parkar et al. 2025,
 *    doi:10.17632/rx3fjgz96x.1);
 *  - carbohydrates: cotton, linen, lyocell, rayon (same set), NRCan white paper (PlotFTIR), starch (cran/spftir);
 *  - aromatic control: NRCan polystyrene film.
 * The reference data hold no carboxylate salt; the carboxylate pair is checked on the demo's magnesium
 * stearate (fixtures/, synthetic: band positions from textbook knowledge, from memory).
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { SPECTRA_DIR } from '../../fixtures/generate';
import { rankCandidates, type SpectrumBand } from '../../server/spectra/candidates';
import { assignBand, shapeOf } from '../../server/spectra/group-frequencies';
import { defaultMidIrAtrMethod } from '../../server/spectra/method';
import { readSpectrum } from '../../server/spectra/parse';
import { prepare } from '../../server/spectra/preprocess';
import type { Spectrum } from '../../server/spectra/types';
import { loadReference } from './spectra-analysis-data';

/** Every peak the default method detects, as the spectrum's band list. */
function bandsOf(s: Spectrum): SpectrumBand[] {
  return prepare(s, defaultMidIrAtrMethod).peaks.map((p) => ({
    position: p.position,
    prominence: p.prominence,
    width: p.width,
  }));
}
const real = (f: string) => bandsOf(loadReference(f));
const demo = (f: string) => bandsOf(readSpectrum(readFileSync(path.join(SPECTRA_DIR, f)), path.basename(f)));

/** The strongest band between from and to. */
function bandIn(bands: SpectrumBand[], from: number, to: number): SpectrumBand {
  const inside = bands.filter((b) => b.position >= from && b.position <= to);
  if (!inside.length) throw new Error(`no band between ${from} and ${to} cm-1`);
  return inside.reduce((m, b) => ((b.prominence ?? 0) > (m.prominence ?? 0) ? b : m));
}
const top = (bands: SpectrumBand[], from: number, to: number) => rankCandidates(bandIn(bands, from, to), bands)[0];
const lookupTop = (b: SpectrumBand) => assignBand(b.position, b.width !== undefined ? shapeOf(b.width) : undefined)[0];

describe('amide bands (polyamides and proteins)', () => {
  const AMIDES = [
    'atr-ftir-fibres/nylon6_s074.csv',
    'atr-ftir-fibres/nylon66_s090.csv',
    'atr-ftir-fibres/silk_Bombyx-mori_s16.2.csv',
    'atr-ftir-fibres/wool_worsted-white_s0.csv',
    'atr-ftir-fibres/para-aramid_s049.csv',
  ];

  it.each(AMIDES)('%s: amide I, amide II, amide III region and N-H are ranked as amide bands', (f) => {
    const bands = real(f);
    expect(top(bands, 1600, 1700).group.id).toBe('amide-1');
    expect(top(bands, 1500, 1560).group.id).toBe('amide-2');
    expect(top(bands, 1220, 1310).group.id).toBe('amide-3');
    expect(top(bands, 3250, 3330).group.id).toBe('nh-amide');
    const amideI = rankCandidates(bandIn(bands, 1600, 1700), bands)[0];
    expect(amideI.support.join(' ')).toMatch(/amide II band at 15\d\d cm-1/);
  });

  it('the table lookup alone named an alkene for amide I and a nitro group for amide II (nylon 6): the ranking does not', () => {
    const bands = real('atr-ftir-fibres/nylon6_s074.csv');
    expect(lookupTop(bandIn(bands, 1600, 1700)).id).toBe('cc-alkene');
    expect(lookupTop(bandIn(bands, 1500, 1560)).id).toBe('no2-asym');
    const alkene = rankCandidates(bandIn(bands, 1600, 1700), bands).find((c) => c.group.id === 'cc-alkene')!;
    const nitro = rankCandidates(bandIn(bands, 1500, 1560), bands).find((c) => c.group.id === 'no2-asym')!;
    expect(nitro.missing.join(' ')).toMatch(/strong NO2 symmetric stretch/);
    // Nylon's weak band near 3080 cm-1 (an overtone, not =C-H) gives the alkene only a little support.
    expect(alkene.weight).toBeLessThan(0.1);
  });
});

describe('carbohydrate bands', () => {
  const CELLULOSE = [
    'atr-ftir-fibres/cotton_raw-boll_s6.4.csv',
    'atr-ftir-fibres/linen_hand-spun-thread_s4.2_r1.csv',
    'atr-ftir-fibres/lyocell_s055.csv',
    'atr-ftir-fibres/rayon-viscose_s188.csv',
    'atr-ftir/white_paper.csv',
    'ftir-starch/spftir_starch_F.csv',
  ];

  it.each(CELLULOSE)('%s: the strong C-O band is C-O, the broad O-H band is O-H, not N-H', (f) => {
    const bands = real(f);
    expect(top(bands, 1000, 1070).group.id).toBe('c-o');
    const oh = top(bands, 3300, 3450);
    expect(oh.group.id).toBe('oh-hbonded');
    expect(oh.support.join(' ')).toMatch(/strong C-O stretch at 10\d\d cm-1/);
  });

  it('the glycosidic band near 895 and 871 cm-1 is ranked glycosidic, not an aromatic out-of-plane bend', () => {
    for (const [f, from, to] of [
      ['atr-ftir-fibres/lyocell_s055.csv', 880, 905],
      ['atr-ftir/white_paper.csv', 860, 880],
    ] as const) {
      const bands = real(f);
      const ranked = rankCandidates(bandIn(bands, from, to), bands);
      expect(ranked[0].group.id, f).toBe('glycosidic');
      expect(ranked.find((c) => c.group.id === 'ar-oop')?.missing.length).toBeGreaterThan(0);
    }
  });

  it('the band near 1640-1655 cm-1 of starch and linen is water (H-O-H bend beside the broad O-H), not an alkene', () => {
    for (const f of ['ftir-starch/spftir_starch_A.csv', 'atr-ftir-fibres/linen_hand-spun-thread_s4.2_r1.csv']) {
      const bands = real(f);
      const b = bandIn(bands, 1625, 1665);
      expect(rankCandidates(b, bands)[0].group.id, f).toBe('water-bend');
      expect(lookupTop(b).id, f).not.toBe('water-bend');
    }
  });
});

describe('carboxylate, and controls that keep their groups', () => {
  it('magnesium stearate (demo, synthetic): carboxylate pair, CH2 bands, no aromatic ring', () => {
    const bands = demo('magnesium-stearate/ref-1.jdx');
    const asym = bandIn(bands, 1560, 1590);
    expect(lookupTop(asym).id).toBe('cc-arene'); // what the table alone offered
    expect(rankCandidates(asym, bands)[0].group.id).toBe('coo-asym');
    expect(top(bands, 1410, 1430).group.id).toBe('coo-sym');
    expect(top(bands, 1455, 1475).group.id).toBe('ch-bend-ch2');
    expect(top(bands, 715, 730).group.id).toBe('ch2-rock');
    for (const b of bands.filter((x) => (x.prominence ?? 0) >= 0.1)) {
      expect(['cc-arene', 'ar-oop', 'ch-arene']).not.toContain(rankCandidates(b, bands)[0].group.id);
    }
  });

  it('povidone (demo, synthetic): amide I for the lactam C=O, and no band ranked as a nitro group', () => {
    const bands = demo('povidone/ref-1.jdx');
    expect(top(bands, 1640, 1670).group.id).toBe('amide-1');
    for (const b of bands) expect(['no2-asym', 'no2-sym']).not.toContain(rankCandidates(b, bands)[0].group.id);
  });

  it('polystyrene (real) keeps its aromatic ring: ring C=C and out-of-plane bands ranked aromatic', () => {
    const bands = real('atr-ftir/polystyrene_film.csv');
    expect(top(bands, 1590, 1610).group.id).toBe('cc-arene');
    expect(top(bands, 1485, 1500).group.id).toBe('cc-arene');
    expect(top(bands, 740, 760).group.id).toBe('ar-oop');
    expect(top(bands, 900, 910).group.id).toBe('ar-oop'); // 698 cm-1 lies below the method range
  });
});
