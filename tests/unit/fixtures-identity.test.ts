/**
 * The demo spectra behave as the demo scenario needs, judged by the engine itself
 * (server/spectra) under the demo site's methods (fixtures/demo-methods.ts):
 * - every container of a lot passes against its own grade's references and fails
 *   against every other grade's;
 * - the mix-up containers fail as the labelled grade and library search names the
 *   material actually inside first;
 * - the poor-contact file is refused by the quality gate (no verdict);
 * - the specificity check over the whole demo library reports exactly one pair as
 *   not discriminated under the default method, the citric acid hydrate pair, and
 *   no pair under the tightened hydrate method;
 * - the polystyrene films pass the site's ATR positions, the drifted film fails,
 *   and, like real diamond-ATR films (../shared/domain-facts.md section 10), the
 *   films fail the transmission positions of Ph. Eur. 2.2.24 (FT column).
 * If a band-list change breaks one of these, tune the band lists, not the engine.
 */
import { readFileSync } from 'node:fs';
import path from 'node:path';
import { describe, expect, it } from 'vitest';
import { MATERIALS } from '../../fixtures/band-lists';
import { type DemoSpectrum, demoSpectra } from '../../fixtures/catalogue';
import {
  DEMO_DEFAULT_METHOD,
  LOOK_ALIKE_PAIR,
  TIGHTENED_HYDRATE_METHOD,
  finalDemoMethod,
} from '../../fixtures/demo-methods';
import { SPECTRA_DIR } from '../../fixtures/generate';
import { POLYSTYRENE_CHECK_BANDS } from '../../fixtures/polystyrene';
import {
  type IdentityMethod,
  type PreparedReference,
  buildLibrary,
  checkPolystyrene,
  prepareReference,
  readSpectrum,
  scoreAgainst,
  searchLibrary,
  specificityMatrix,
} from '../../server/spectra/index';

const specs = demoSpectra();
const read = (s: DemoSpectrum) => readSpectrum(readFileSync(path.join(SPECTRA_DIR, s.path)), path.basename(s.path));
const referenceSpecs = specs.filter((s) => s.kind === 'reference');
const references = referenceSpecs.map((s) => ({ id: s.path, materialId: s.material!, spectrum: read(s) }));

function preparedFor(method: IdentityMethod): Map<string, PreparedReference[]> {
  const out = new Map<string, PreparedReference[]>();
  for (const r of references) out.set(r.materialId, [...(out.get(r.materialId) ?? []), prepareReference(r, method)]);
  return out;
}

const finalSets = new Map(MATERIALS.map((m) => [m.key, preparedFor(finalDemoMethod(m.key)).get(m.key)!]));

describe('demo spectra under the demo methods', () => {
  it('has three references per grade', () => {
    for (const m of MATERIALS) expect(finalSets.get(m.key)?.length, m.key).toBe(3);
  });

  const containers = specs.filter((s) => s.kind === 'container');
  const genuine = containers.filter((s) => s.contains === s.material);
  const mixUps = containers.filter((s) => s.contains !== s.material);

  it('every genuine container passes against its own grade and fails against every other grade', () => {
    for (const s of genuine) {
      const sample = read(s);
      const own = scoreAgainst(sample, finalSets.get(s.material!)!, finalDemoMethod(s.material!));
      expect(own.verdict, `${s.path} as its own grade`).toBe('pass');
      for (const m of MATERIALS.filter((x) => x.key !== s.material)) {
        const other = scoreAgainst(sample, finalSets.get(m.key)!, finalDemoMethod(m.key));
        expect(other.verdict, `${s.path} as ${m.key}`).toBe('fail');
      }
    }
  });

  it('every reference passes against the other references of its grade (leave one out, as the library matrix shows)', () => {
    for (const s of referenceSpecs) {
      const others = references.filter((r) => r.materialId === s.material && r.id !== s.path);
      const r = scoreAgainst(read(s), others, finalDemoMethod(s.material!));
      expect(r.verdict, `${s.path}: ${r.explanation.join(' ')}`).toBe('pass');
    }
  });

  it('the mix-up containers fail as the labelled grade, and library search names the material inside first', () => {
    expect(mixUps.map((s) => `${s.material}<-${s.contains}`).sort()).toEqual([
      'citric-acid-anhydrous<-citric-acid-monohydrate',
      'microcrystalline-cellulose<-maize-starch',
    ]);
    for (const s of mixUps) {
      const method = finalDemoMethod(s.material!);
      const sample = read(s);
      const result = scoreAgainst(sample, finalSets.get(s.material!)!, method);
      expect(result.verdict, s.path).toBe('fail');
      const library = buildLibrary([...preparedFor(method).values()].flat(), method);
      const hits = searchLibrary(library, sample, 3);
      expect(hits[0].materialId, s.path).toBe(s.contains);
    }
  });

  it('the draft reference (left for QA to approve) matches its grade', () => {
    const s = specs.find((x) => x.kind === 'draft-reference')!;
    expect(scoreAgainst(read(s), finalSets.get(s.material!)!, finalDemoMethod(s.material!)).verdict).toBe('pass');
  });

  it('the poor-contact measurement is refused by the quality gate, not judged', () => {
    const s = specs.find((x) => x.kind === 'poor-contact')!;
    const result = scoreAgainst(read(s), finalSets.get(s.material!)!, finalDemoMethod(s.material!));
    expect(result.verdict).toBe('invalid');
    expect(result.quality.problems.map((p) => p.code)).toContain('TOO_WEAK');
  });

  it('under the default method the specificity check flags exactly the citric acid hydrate pair', () => {
    const lib = buildLibrary(references, DEMO_DEFAULT_METHOD);
    const report = specificityMatrix(lib);
    expect(report.notDiscriminated.map((p) => [...p].sort())).toEqual([[...LOOK_ALIKE_PAIR]]);
    // True matches keep a margin above the limit for every grade except sodium chloride,
    // whose spectrum is only traces of water (see its method notes).
    for (const m of report.materials.filter((x) => x.materialId !== 'sodium-chloride')) {
      expect(m.withinMargin, m.materialId).toBeGreaterThan(0.01);
    }
  });

  it('under the tightened hydrate method the pair is discriminated, and no other pair is flagged', () => {
    const lib = buildLibrary(references, TIGHTENED_HYDRATE_METHOD);
    const report = specificityMatrix(lib);
    expect(report.notDiscriminated).toEqual([]);
  });

  it('the monohydrate container passes as the anhydrous grade under the default method (why the method was tightened)', () => {
    const s = specs.find(
      (x) =>
        x.kind === 'container' && x.material === 'citric-acid-anhydrous' && x.contains === 'citric-acid-monohydrate',
    )!;
    const set = preparedFor(DEMO_DEFAULT_METHOD).get('citric-acid-anhydrous')!;
    expect(scoreAgainst(read(s), set, DEMO_DEFAULT_METHOD).verdict).toBe('pass');
  });
});

describe('demo polystyrene films', () => {
  const site = {
    name: 'demo site ATR positions',
    instrument: 'ft' as const,
    bands: POLYSTYRENE_CHECK_BANDS.map((b) => ({ nominal: b.site, tolerance: b.tolerance })),
  };
  const films = specs.filter((s) => s.kind === 'polystyrene');

  it('films in calibration pass the site positions with every band within 0.3 cm-1', () => {
    for (const s of films.filter((x) => x.scaleShift === 0)) {
      const r = checkPolystyrene(read(s), { spec: site, mode: 'atr' });
      expect(r.verdict, s.path).toBe('pass');
      for (const b of r.bands) expect(Math.abs(b.deviation!), `${s.path} ${b.nominal}`).toBeLessThan(0.3);
    }
  });

  it('the drifted film fails the site positions', () => {
    const s = films.find((x) => (x.scaleShift ?? 0) !== 0)!;
    expect(checkPolystyrene(read(s), { spec: site, mode: 'atr' }).verdict).toBe('fail');
  });

  it('like real diamond-ATR films, the films fail the Ph. Eur. transmission positions (FT column)', () => {
    for (const s of films) expect(checkPolystyrene(read(s), { mode: 'atr' }).verdict, s.path).toBe('fail');
  });
});
