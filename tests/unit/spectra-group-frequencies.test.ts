import { describe, expect, it } from 'vitest';
import { prepare } from '../../server/spectra/preprocess';
import { defaultMidIrAtrMethod } from '../../server/spectra/method';
import {
  assignBand,
  describeAssignment,
  GROUP_FREQUENCIES,
  GROUP_FREQUENCY_SOURCE,
} from '../../server/spectra/group-frequencies';
import { loadReference } from './spectra-analysis-data';

// Expected assignments: standard IR correlation tables (Silverstein, Webster & Kiemle; Pavia et al.),
// from memory, as collected in ../shared/domain-facts.md section 9.
describe('group-frequency assignment', () => {
  it('names its source and marks it from memory', () => {
    expect(GROUP_FREQUENCY_SOURCE).toMatch(/Silverstein/);
    expect(GROUP_FREQUENCY_SOURCE).toMatch(/from memory/);
  });

  it('covers the required groups', () => {
    const ids = GROUP_FREQUENCIES.map((g) => g.id);
    for (const id of [
      'oh-free',
      'oh-hbonded',
      'oh-acid',
      'nh-amine',
      'ch-alkane',
      'ch-alkene',
      'ch-arene',
      'ch-aldehyde',
      'cn-nitrile',
      'cc-alkyne',
      'co-ester',
      'co-ketone',
      'co-aldehyde',
      'co-acid',
      'amide-1',
      'cc-alkene',
      'cc-arene',
      'c-o',
      'no2-asym',
      'no2-sym',
      'coo-asym',
      'coo-sym',
      'amide-3',
      'ch2-rock',
      'fingerprint',
    ]) {
      expect(ids).toContain(id);
    }
    for (const g of GROUP_FREQUENCIES) expect(g.from).toBeLessThan(g.to);
  });

  it.each([
    [3400, 'broad', 'oh-hbonded'],
    [3620, 'sharp', 'oh-free'],
    [3000, 'broad', 'oh-acid'],
    [2930, 'sharp', 'ch-alkane'],
    [2720, 'sharp', 'ch-aldehyde'],
    [2245, 'sharp', 'cn-nitrile'],
    [1742, 'sharp', 'co-ester'],
    [1375, 'sharp', 'ch-bend-ch3'],
    [1520, 'sharp', 'no2-asym'],
  ] as const)('%d cm-1 (%s) is first assigned to %s', (wn, shape, id) => {
    expect(assignBand(wn, shape)[0].id).toBe(id);
  });

  it('names both candidates where the table overlaps (arene or alkene C-H; alkene C=C or amide I)', () => {
    expect(
      assignBand(3050, 'sharp')
        .slice(0, 2)
        .map((g) => g.id)
        .sort(),
    ).toEqual(['ch-alkene', 'ch-arene']);
    const amide = describeAssignment(1660);
    expect(amide).toMatch(/amide I/);
    expect(amide).toMatch(/ or /);
  });

  it('keeps the fingerprint region last and names it below 1500 cm-1', () => {
    const list = assignBand(1100);
    expect(list[list.length - 1].id).toBe('fingerprint');
    expect(list[0].id).toBe('c-o');
    expect(describeAssignment(1100)).toMatch(/C-O stretch.*fingerprint region/);
    expect(describeAssignment(900, 'broad')).toMatch(/fingerprint/);
  });

  it('a band just outside a textbook range still gets that candidate (ranges are approximate)', () => {
    expect(assignBand(2849.7, 'sharp')[0].id).toBe('ch-alkane');
  });

  it('assigns real bands: the nitrile of an acrylic fibre and the ester carbonyl of PET', () => {
    const m = defaultMidIrAtrMethod;
    const acrylic = prepare(loadReference('atr-ftir-fibres/acrylic_PAN-MA_s005.csv'), m).peaks.find(
      (p) => p.position > 2200 && p.position < 2280,
    );
    expect(acrylic).toBeDefined();
    expect(describeAssignment(acrylic!.position, 'sharp')).toMatch(/C≡N/);
    const pet = prepare(loadReference('atr-ftir-fibres/polyester-PET_s144.csv'), m).peaks.find(
      (p) => p.position > 1680 && p.position < 1760,
    );
    expect(pet).toBeDefined();
    expect(assignBand(pet!.position, 'sharp').map((g) => g.id)).toContain('co-conjugated');
  });
});

describe('carbohydrate skeleton band', () => {
  // Cellulose and other beta-linked polysaccharides show the glycosidic C-O-C / C1-H band near
  // 897 cm-1, alpha-linked ones (starch) near 850 cm-1 (standard IR correlation tables and the
  // cellulose literature, from memory). It must not be named first as an aromatic ring bend.
  it.each([897, 850])('a sharp band at %d cm-1 is first assigned to the glycosidic link', (w) => {
    expect(assignBand(w, 'sharp')[0].id).toBe('glycosidic');
    expect(describeAssignment(w, 'sharp')).toMatch(/glycosidic/);
  });
  it('a band at 760 cm-1 is still an aromatic C-H out-of-plane bend', () => {
    expect(assignBand(760, 'sharp')[0].id).toBe('ar-oop');
  });
});
