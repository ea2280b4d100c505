/**
 * Plain-words explanation of an identity result: which criterion failed, which
 * reference bands are missing or shifted, which bands are extra, and what such
 * bands usually mean (from the group-frequency table).
 */
import type { BandRow, ExtraBand } from './bands';
import { assignBand, shapeOf } from './group-frequencies';
import type { QualityReport } from './quality';
import type { Criterion, ReferenceScore } from './result';

/** At most this many band sentences of each kind; the rest are counted. */
export const MAX_BAND_SENTENCES = 6;

const cm = (v: number) => `${v.toFixed(1)} cm-1`;
const signed = (v: number) => `${v >= 0 ? '+' : ''}${v.toFixed(1)} cm-1`;

function criterionSentence(c: Criterion): string {
  const ok = c.verdict === 'pass';
  switch (c.key) {
    case 'correlation':
      return `Correlation of the prepared spectra is ${c.value.toFixed(4)} (at least ${c.limit} required)${ok ? '.' : ': the overall shapes of the spectra differ.'}`;
    case 'derivative-correlation':
      return `Correlation of the first-derivative spectra is ${c.value.toFixed(4)} (at least ${c.limit} required)${ok ? '.' : ': band positions or shapes differ.'}`;
    case 'band-concordance':
      return `${c.value} of ${c.limit} reference bands were found in the sample within tolerance.`;
    case 'relative-intensity':
      return `${c.value} of ${c.limit} reference bands have the relative intensity of the reference (as a fraction of the strongest band)${ok ? '.' : ': the relative sizes of the bands differ.'}`;
    case 'extra-bands':
      return ok
        ? 'The sample shows no strong band that the reference lacks.'
        : `The sample shows ${c.value} strong band(s) that the reference lacks.`;
    case 'mahalanobis':
      return `Distance to the reference set is ${c.value.toFixed(2)} standard deviations (at most ${c.limit} allowed)${ok ? '.' : ': the sample lies outside the spread of the approved references.'}`;
    case 'residual':
      return `Spectral residual outside the model of the reference set (Q) is ${c.value.toFixed(2)} times its limit derived from the references (at most ${c.limit})${ok ? '.' : ': the sample shows spectral features the approved references do not have.'}`;
    case 'reference-model':
      return 'The model of the reference set that the method asks for could not be built, so the sample cannot pass.';
  }
}

/** What a band at this position and width usually means, from the correlation table. */
export function bandMeaning(position: number, width: number | undefined): string {
  const shape = width !== undefined ? shapeOf(width) : undefined;
  const [best] = assignBand(position, shape);
  if (!best) return 'no common group frequency';
  return best.meaning ? `${best.group}; usually ${best.meaning}` : best.group;
}

/** QA's assignment of a reference band in brackets; nothing when QA set none. */
const named = (r: BandRow) => (r.assignment ? ` (${r.assignment})` : '');

function missingSentences(rows: BandRow[]): string[] {
  const bad = rows
    .filter((r) => !r.withinTolerance)
    .sort((a, b) => (b.referenceProminence ?? 0) - (a.referenceProminence ?? 0));
  const out = bad
    .slice(0, MAX_BAND_SENTENCES)
    .map((r) =>
      r.sampleBand === null || r.shift === null
        ? `Reference band at ${cm(r.referenceBand)}${named(r)} is missing in the sample.`
        : `Reference band at ${cm(r.referenceBand)}${named(r)} appears at ${cm(r.sampleBand)} in the sample, shifted by ${signed(r.shift)}; at most ±${r.tolerance.toFixed(1)} cm-1 is allowed${r.toleranceRule ? ` (${r.toleranceRule})` : ''}.`,
    );
  if (bad.length > MAX_BAND_SENTENCES)
    out.push(`${bad.length - MAX_BAND_SENTENCES} further reference bands are missing or shifted (see the band table).`);
  return out;
}

const fraction = (v: number) => v.toFixed(2);

function intensitySentences(rows: BandRow[]): string[] {
  const bad = rows
    .filter((r) => r.intensity && r.intensity.verdict === 'fail')
    .sort((a, b) => Math.abs(b.intensity?.difference ?? 0) - Math.abs(a.intensity?.difference ?? 0));
  const out = bad.slice(0, MAX_BAND_SENTENCES).map((r) => {
    const i = r.intensity as NonNullable<BandRow['intensity']>;
    return (
      `Band at ${cm(r.referenceBand)} has ${fraction(i.sample as number)} of the strongest band's height in the sample and ` +
      `${fraction(i.reference)} in the reference (difference ${(i.difference as number) >= 0 ? '+' : ''}${fraction(i.difference as number)}; at most ±${i.tolerance} allowed).`
    );
  });
  if (bad.length > MAX_BAND_SENTENCES)
    out.push(`${bad.length - MAX_BAND_SENTENCES} further bands differ in relative intensity (see the band table).`);
  const notCompared = rows.filter((r) => r.intensity?.verdict === 'not-compared');
  if (notCompared.length && notCompared.length === rows.length)
    out.push('The strongest reference band was not found in the sample, so no relative intensity could be compared.');
  return out;
}

function extraSentences(extra: ExtraBand[]): string[] {
  const sorted = [...extra].sort((a, b) => b.prominence - a.prominence);
  const out = sorted
    .slice(0, MAX_BAND_SENTENCES)
    .map(
      (e) =>
        `Extra ${shapeOf(e.width)} band at ${cm(e.position)}, not in the reference: ${bandMeaning(e.position, e.width)}.`,
    );
  if (sorted.length > MAX_BAND_SENTENCES)
    out.push(`${sorted.length - MAX_BAND_SENTENCES} further extra bands (see the band table).`);
  const water = extra.some((e) => assignBand(e.position, shapeOf(e.width))[0]?.id === 'oh-hbonded');
  const bend = extra.some((e) => e.position >= 1590 && e.position <= 1660);
  if (water && bend)
    out.push('A broad O-H band together with a band near 1640 cm-1 points to water: check the sample for moisture.');
  return out;
}

export interface ExplainInput {
  verdict: 'pass' | 'fail' | 'invalid';
  quality: QualityReport;
  best: ReferenceScore | null;
  setCriteria: Criterion[];
  referenceCount: number;
  /** Why the reference-set model could not be built. */
  modelProblems?: string[];
  /** The caller asked to judge references one by one although the method has criteria on the whole set. */
  setCriteriaLeftOut?: boolean;
}

export function explain(input: ExplainInput): string[] {
  const { verdict, quality, best, setCriteria, referenceCount, modelProblems = [], setCriteriaLeftOut } = input;
  if (verdict === 'invalid') {
    return [
      'The measurement was refused before any comparison; it is neither a pass nor a fail.',
      ...quality.problems.map((p) => `${p.message} ${p.advice}`),
    ];
  }
  if (!best) return ['No reference could be compared.'];
  const lines: string[] = [];
  const failedSet = setCriteria.filter((c) => c.verdict === 'fail');
  const name = best.referenceLabel ?? best.referenceId;
  if (verdict === 'pass') {
    lines.push(`Identity confirmed against reference ${name}: every criterion passes.`);
    const shifts = best.bands.filter((r) => r.shift !== null).map((r) => Math.abs(r.shift as number));
    if (shifts.length)
      lines.push(
        `Largest band shift ${Math.max(...shifts).toFixed(1)} cm-1 over ${best.bands.length} reference bands.`,
      );
  } else if (best.verdict === 'pass' && failedSet.length) {
    lines.push(
      `Identity not confirmed: reference ${name} matches, but the sample fails a criterion on the whole reference set.`,
    );
  } else {
    lines.push(
      referenceCount > 1
        ? `Identity not confirmed: none of the ${referenceCount} references meets every criterion. Closest reference: ${name}.`
        : `Identity not confirmed against reference ${name}.`,
    );
  }
  for (const c of [...best.criteria, ...setCriteria])
    if (verdict === 'pass' || c.verdict === 'fail') lines.push(criterionSentence(c));
  lines.push(...modelProblems);
  if (setCriteriaLeftOut)
    lines.push(
      'Criteria on the whole reference set (distance, residual) were not evaluated: each reference was judged alone.',
    );
  if (verdict !== 'pass') {
    lines.push(...missingSentences(best.bands));
    lines.push(...intensitySentences(best.bands));
    lines.push(...extraSentences(best.extraBands));
  }
  return lines;
}
