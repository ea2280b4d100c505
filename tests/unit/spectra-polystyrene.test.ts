import { describe, expect, it } from 'vitest';
import {
  checkPolystyrene,
  PH_EUR_POLYSTYRENE_FT,
  PH_EUR_POLYSTYRENE_MONOCHROMATOR,
  type PolystyreneSpec,
} from '../../server/spectra/polystyrene';
import type { Spectrum } from '../../server/spectra/types';
import { loadReference, syntheticSpectrum } from './spectra-analysis-data';

// Positions and tolerances: Ph. Eur. 2.2.24, Table 2.2.24.-1 (as listed in ../shared/domain-facts.md 1.1).
// The film: ../shared/reference-data/atr-ftir/polystyrene_film.csv, diamond ATR, 1.86 cm-1 spacing.
const film = () => loadReference('atr-ftir/polystyrene_film.csv');
// Band maxima of this film found by parabolic interpolation (domain-facts 10, team data, computed independently).
const TEAM_POSITIONS = [3058.2, 2847.2, 1942.4, 1599.4, 1582.0, 1152.9, 1026.3];

const shifted = (s: Spectrum, by: number): Spectrum => ({ ...s, x: s.x.map((v) => v + by) });

describe('polystyrene wavenumber check', () => {
  it('locates all seven bands of the real ATR film to sub-grid precision', () => {
    const r = checkPolystyrene(film(), { mode: 'atr' });
    const spacing = 1.8637;
    r.bands.forEach((b, i) => {
      expect(b.found).not.toBeNull();
      expect(Math.abs((b.found as number) - TEAM_POSITIONS[i])).toBeLessThan(0.06);
      // Sub-grid: not simply a data point.
      const fromGrid = ((b.found as number) - 650.4205) / spacing;
      expect(Math.abs(fromGrid - Math.round(fromGrid))).toBeGreaterThan(0.01);
    });
  });

  it('FAILS the Ph. Eur. FT tolerances: bands 0.5-2.3 cm-1 low, five of seven outside +-1.0 (the correct verdict for ATR)', () => {
    const r = checkPolystyrene(film(), { mode: 'atr' });
    expect(r.spec).toBe(PH_EUR_POLYSTYRENE_FT.name);
    expect(r.verdict).toBe('fail');
    for (const b of r.bands) {
      expect(b.deviation as number).toBeLessThan(-0.49);
      expect(b.deviation as number).toBeGreaterThan(-2.3);
      expect(b.tolerance).toBe(1.0);
    }
    expect(r.bands.filter((b) => !b.ok).map((b) => b.nominal)).toEqual([3060.0, 2849.5, 1601.2, 1154.5, 1028.3]);
  });

  it('passes the monochromator column only where its wider tolerances allow (1942.9 and 1583.0; 2849.5 is 2.26 low, limit 2.0)', () => {
    const r = checkPolystyrene(film(), { mode: 'atr', spec: PH_EUR_POLYSTYRENE_MONOCHROMATOR });
    expect(r.bands.map((b) => b.tolerance)).toEqual([1.5, 2.0, 1.5, 1.0, 1.0, 1.0, 1.0]);
    expect(r.bands.filter((b) => b.ok).map((b) => b.nominal)).toEqual([1942.9, 1583.0]);
    expect(r.verdict).toBe('fail');
  });

  it('passes with site-approved ATR positions taken from this spectrum, and fails when the spectrum is shifted by 1.5 cm-1', () => {
    const found = checkPolystyrene(film(), { mode: 'atr' }).bands.map((b) => Math.round((b.found as number) * 10) / 10);
    const site: PolystyreneSpec = {
      name: 'Site ATR positions (QA-approved)',
      instrument: 'ft',
      bands: found.map((nominal) => ({ nominal, tolerance: 1.0 })),
    };
    const ok = checkPolystyrene(film(), { mode: 'atr', spec: site });
    expect(ok.verdict).toBe('pass');
    for (const b of ok.bands) expect(Math.abs(b.deviation as number)).toBeLessThanOrEqual(0.05);
    for (const by of [1.5, -1.5]) {
      const bad = checkPolystyrene(shifted(film(), by), { mode: 'atr', spec: site });
      expect(bad.verdict).toBe('fail');
      expect(bad.bands.every((b) => !b.ok)).toBe(true);
      for (const b of bad.bands) expect(b.deviation as number).toBeCloseTo(by, 1);
    }
  });

  it('reports the resolution criterion as not applicable in ATR mode, and applies it (and fails it) in transmission mode', () => {
    const atr = checkPolystyrene(film(), { mode: 'atr' });
    expect(atr.resolution.applicable).toBe(false);
    expect(atr.resolution.reason).toMatch(/transmission/);
    // Taken as a transmission spectrum, the ATR bands (peak absorbance 0.008-0.04, domain-facts 10)
    // are far too weak for A(2849.5) - A(2870) > 0.33.
    const tr = checkPolystyrene(film(), { mode: 'transmission' });
    expect(tr.resolution.applicable).toBe(true);
    expect(tr.resolution.checks.every((c) => !c.ok)).toBe(true);
    expect(tr.resolution.checks[0].value).toBeLessThan(0.05);
  });

  it('a synthetic transmission film with bands at the Ph. Eur. positions passes, also on the resolution criterion', () => {
    const bands = [
      { at: 3060.0, height: 0.9, fwhm: 8 },
      { at: 3026, height: 1.2, fwhm: 10 },
      { at: 2922, height: 1.5, fwhm: 25 },
      { at: 2849.5, height: 1.0, fwhm: 8 },
      { at: 1942.9, height: 0.3, fwhm: 10 },
      { at: 1601.2, height: 0.8, fwhm: 6 },
      { at: 1583.0, height: 0.4, fwhm: 4 },
      { at: 1154.5, height: 0.3, fwhm: 8 },
      { at: 1028.3, height: 0.5, fwhm: 8 },
    ];
    const s = syntheticSpectrum(bands, { from: 600, to: 4000, step: 0.48, offset: 0.05 });
    const r = checkPolystyrene(s, { mode: 'transmission' });
    for (const b of r.bands) expect(Math.abs(b.deviation as number)).toBeLessThan(0.05);
    expect(r.resolution.checks.map((c) => c.ok)).toEqual([true, true]);
    expect(r.verdict).toBe('pass');
    expect(r.engineVersion).toMatch(/^\d+\.\d+\.\d+$/);
  });

  it('a band with no maximum in its window is not found and fails', () => {
    const s = syntheticSpectrum([{ at: 1601.2, height: 0.5, fwhm: 6 }], { from: 600, to: 4000 });
    const r = checkPolystyrene(s, { mode: 'atr' });
    expect(r.bands.find((b) => b.nominal === 3060.0)).toMatchObject({ found: null, deviation: null, ok: false });
    expect(r.bands.find((b) => b.nominal === 1601.2)?.ok).toBe(true);
  });
});
