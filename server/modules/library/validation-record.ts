/**
 * The validation record of a method version (ICH Q2(R2) specificity and robustness; contents in
 * docs/methods.md), assembled from data Drumline holds when QA approves the version:
 *  1. the reference set scored against itself, leave one out (each reference as a sample against
 *     the others) - how low true matches go;
 *  2. passed measurements of the material (up to MAX_MEASUREMENTS, newest first) re-scored under
 *     the version, across lots, instruments and operators - does the version still pass them;
 *  3. the closest other materials with their scores and margins (the approval gate, both directions);
 *  4. suggested limits between the lowest true match and the closest other material.
 * Stored as a PDF with the version (method_approval, stored_file); its SHA-256 is part of the
 * approval signature's content.
 */
import type { Knex } from 'knex';
import type { ContainerRow, LotRow, MeasurementRow } from '../../lib/db-tables';
import { type Content, renderPdf, type TableCell } from '../../lib/pdf';
import {
  ENGINE_VERSION,
  type IdentityMethod,
  prepareReference,
  scoreAgainst,
  specificityMarginsOf,
  SpectrumError,
} from '../../spectra';
import type { MethodGateReport, SpecificityMarginsValue } from './contract';
import { round, spectrumOfFile, toEngineBands } from './engine';
import type { OwnReference } from './gate';

export const MAX_MEASUREMENTS = 200;

export const VALIDATION_CAUTION =
  'This record supports, and does not replace, the laboratory’s validated procedure and the judgement of the responsible person under local GMP rules. It is assembled from the spectra Drumline holds; spectra it does not hold (other suppliers, other physical forms) are not covered.';

export interface ValidationRecord {
  material: { id: number; code: string; name: string; grade: string };
  method: {
    id: number;
    version: number;
    technique: string;
    minCorrelation: number;
    minDerivativeCorrelation: number | null;
    maxMahalanobis: number | null;
    bandTolerance: string;
    margins: SpecificityMarginsValue;
  };
  engineVersion: string;
  assembledAt: string;
  references: string[];
  leaveOneOut: {
    referenceCode: string;
    correlation: number | null;
    derivativeCorrelation: number | null;
    verdict: string;
  }[];
  leaveOneOutNote: string | null;
  measurements: {
    lot: string;
    container: string;
    instrument: string;
    operator: string;
    measuredAt: string;
    correlation: number | null;
    verdict: string;
  }[];
  measurementSummary: { count: number; lots: number; instruments: number; operators: number; failing: number };
  closest: {
    materialCode: string;
    materialName: string;
    highestCorrelation: number | null;
    margin: number | null;
    state: string;
  }[];
  suggested: { lowestTrue: number | null; highestOther: number | null; correlation: number | null; note: string };
  gatePassed: boolean;
  caution: string;
}

function corrOf(r: ReturnType<typeof scoreAgainst>): { r: number | null; d: number | null } {
  if (r.verdict === 'invalid') return { r: null, d: null };
  const b = r.references.find((x) => x.referenceId === r.bestReferenceId) ?? r.references[0];
  return {
    r: b ? round(b.correlation, 4) : null,
    d: b?.derivativeCorrelation != null ? round(b.derivativeCorrelation, 4) : null,
  };
}

export async function assembleValidationRecord(
  db: Knex,
  input: {
    material: { id: number; code: string; name: string; grade: string };
    method: { id: number; version: number; technique: string; params: IdentityMethod };
    own: OwnReference[];
    gate: MethodGateReport;
  },
): Promise<ValidationRecord> {
  const { params } = input.method;
  const prepared = input.own.map((r) =>
    prepareReference(
      {
        id: String(r.id),
        label: r.code,
        materialId: String(input.material.id),
        spectrum: r.spectrum,
        bands: toEngineBands(r.bands),
      },
      params,
    ),
  );
  // 1. Leave one out: per-reference criteria only (the set model would need the left-out spectrum).
  const leaveOneOut: ValidationRecord['leaveOneOut'] = [];
  let leaveOneOutNote: string | null = null;
  if (input.own.length < 2) leaveOneOutNote = 'One reference only: no reference can be scored against another.';
  else
    input.own.forEach((r, i) => {
      const others = prepared.filter((_, j) => j !== i);
      const res = scoreAgainst(r.spectrum, others, params, { referenceSetCriteria: false });
      const c = corrOf(res);
      leaveOneOut.push({ referenceCode: r.code, correlation: c.r, derivativeCorrelation: c.d, verdict: res.verdict });
    });

  // 2. Passed measurements of the material, re-scored under this version.
  const rows = await db('measurement as me')
    .join('container as c', 'c.id', 'me.container_id')
    .join('lot as l', 'l.id', 'c.lot_id')
    .join('instrument as i', 'i.id', 'me.instrument_id')
    .join('app_user as u', 'u.id', 'me.created_by')
    .where('l.material_id', input.material.id)
    .andWhere('me.verdict', 'pass')
    .select<
      (Pick<MeasurementRow, 'file_id' | 'created_at'> &
        Pick<LotRow, 'lot_number'> &
        Pick<ContainerRow, 'label'> & { instrument: string; operator: string })[]
    >('me.file_id', 'l.lot_number', 'c.label', 'i.name as instrument', 'u.full_name as operator', 'me.created_at')
    .orderBy('me.id', 'desc')
    .limit(MAX_MEASUREMENTS);
  const measurements: ValidationRecord['measurements'] = [];
  for (const m of rows) {
    let correlation: number | null = null;
    let verdict = 'not compared';
    try {
      const res = scoreAgainst(await spectrumOfFile(db, m.file_id), prepared, params);
      correlation = corrOf(res).r;
      verdict = res.verdict;
    } catch (e) {
      if (!(e instanceof SpectrumError)) throw e;
    }
    measurements.push({
      lot: m.lot_number,
      container: m.label,
      instrument: m.instrument,
      operator: m.operator,
      measuredAt: new Date(m.created_at).toISOString(),
      correlation,
      verdict,
    });
  }

  // 3. Closest other materials (both directions of the gate).
  const byMaterial = new Map<string, ValidationRecord['closest'][number]>();
  for (const row of input.gate.rows) {
    const prev = byMaterial.get(row.otherMaterialCode);
    const margin = row.correlation === null ? null : round(row.correlationLimit - row.correlation, 4);
    if (!prev || (row.correlation ?? -2) > (prev.highestCorrelation ?? -2))
      byMaterial.set(row.otherMaterialCode, {
        materialCode: row.otherMaterialCode,
        materialName: row.otherMaterialName,
        highestCorrelation: row.correlation,
        margin,
        state: prev && prev.state !== 'distinct' && row.state === 'distinct' ? prev.state : row.state,
      });
    else if (prev && row.state !== 'distinct' && prev.state === 'distinct') prev.state = row.state;
  }
  const closest = [...byMaterial.values()].sort((a, b) => (b.highestCorrelation ?? -2) - (a.highestCorrelation ?? -2));

  // 4. Suggested correlation limit: halfway between the lowest true match and the closest other material.
  const trueScores = [...leaveOneOut.map((x) => x.correlation), ...measurements.map((x) => x.correlation)].filter(
    (x): x is number => x !== null,
  );
  const lowestTrue = trueScores.length ? Math.min(...trueScores) : null;
  const highestOther = closest.length ? closest[0].highestCorrelation : null;
  const margins = specificityMarginsOf(params);
  let suggested: number | null = null;
  let note: string;
  if (lowestTrue === null)
    note = 'No true match to score yet (one reference, no passed measurement): no limit can be suggested.';
  else if (highestOther === null) {
    suggested = round(Math.min(lowestTrue - margins.correlation, params.thresholds.minCorrelation), 4);
    note =
      'No other material of this technique is approved: the suggestion keeps the margin below the lowest true match only.';
  } else if (lowestTrue - highestOther <= 2 * margins.correlation)
    note = `The lowest true match (${round(lowestTrue, 4)}) and the closest other material (${highestOther}) lie less than two margins apart: no correlation limit separates them safely; other criteria (bands, derivative) must.`;
  else {
    suggested = round((lowestTrue + highestOther) / 2, 4);
    note = 'Halfway between the lowest true match and the closest other material.';
  }
  const t = params.thresholds;
  return {
    material: input.material,
    method: {
      id: input.method.id,
      version: input.method.version,
      technique: input.method.technique,
      minCorrelation: t.minCorrelation,
      minDerivativeCorrelation: t.minDerivativeCorrelation,
      maxMahalanobis: t.maxMahalanobis,
      bandTolerance:
        params.bandTolerance.mode === 'absolute'
          ? `${params.bandTolerance.cm1} cm-1`
          : `${params.bandTolerance.percent} % of the position`,
      margins,
    },
    engineVersion: ENGINE_VERSION,
    assembledAt: new Date().toISOString(),
    references: input.own.map((r) => r.code),
    leaveOneOut,
    leaveOneOutNote,
    measurements,
    measurementSummary: {
      count: measurements.length,
      lots: new Set(measurements.map((m) => m.lot)).size,
      instruments: new Set(measurements.map((m) => m.instrument)).size,
      operators: new Set(measurements.map((m) => m.operator)).size,
      failing: measurements.filter((m) => m.verdict !== 'pass').length,
    },
    closest,
    suggested: {
      lowestTrue: lowestTrue === null ? null : round(lowestTrue, 4),
      highestOther,
      correlation: suggested,
      note,
    },
    gatePassed: input.gate.passed,
    caution: VALIDATION_CAUTION,
  };
}

const fmt = (v: number | null) => (v === null ? '—' : v.toFixed(4));
const th = (t: string): TableCell => ({ text: t, bold: true });

function table(head: string[], body: TableCell[][]): Content {
  return {
    table: { headerRows: 1, widths: head.map(() => '*'), body: [head.map(th), ...body] },
    layout: 'lightHorizontalLines',
    fontSize: 8,
    margin: [0, 2, 0, 10],
  };
}

/** The record as PDF (pdfmake), printed with the version it belongs to. */
export async function validationRecordPdf(v: ValidationRecord, approverName: string): Promise<Buffer> {
  const m = v.method;
  const content: Content[] = [
    { text: 'Validation record of an identity method version', fontSize: 15, bold: true },
    {
      text: `${v.material.code} · ${v.material.name}${v.material.grade ? ` · ${v.material.grade}` : ''} — method version ${m.version} (${m.technique})`,
      margin: [0, 4, 0, 2],
    },
    {
      text: `Specificity and robustness in the sense of ICH Q2(R2), assembled ${v.assembledAt} (UTC) by Drumline engine ${v.engineVersion} for the approval signed by ${approverName}.`,
      fontSize: 8,
      margin: [0, 0, 0, 8],
    },
    { text: v.caution, fontSize: 8, italics: true, margin: [0, 0, 0, 10] },
    { text: 'Limits and margins', bold: true },
    table(
      ['Criterion', 'Limit', 'Margin at approval'],
      [
        ['Correlation coefficient (r)', `≥ ${m.minCorrelation}`, String(m.margins.correlation)],
        [
          'First-derivative correlation',
          m.minDerivativeCorrelation === null ? 'not used' : `≥ ${m.minDerivativeCorrelation}`,
          String(m.margins.derivativeCorrelation),
        ],
        [
          'Mahalanobis distance',
          m.maxMahalanobis === null ? 'not used' : `≤ ${m.maxMahalanobis}`,
          String(m.margins.mahalanobis),
        ],
        ['Spectral residual (Q / limit)', '≤ 1 where used', String(m.margins.residual)],
        ['Band tolerance', m.bandTolerance, `${m.margins.bands} band(s)`],
      ],
    ),
    { text: `1. Reference set against itself, leave one out (${v.references.join(', ')})`, bold: true },
    v.leaveOneOutNote
      ? { text: v.leaveOneOutNote, fontSize: 8, margin: [0, 2, 0, 10] }
      : table(
          ['Reference', 'r', 'Derivative r', 'Verdict'],
          v.leaveOneOut.map((x) => [x.referenceCode, fmt(x.correlation), fmt(x.derivativeCorrelation), x.verdict]),
        ),
    {
      text: `2. Passed measurements re-scored under this version: ${v.measurementSummary.count} from ${v.measurementSummary.lots} lot(s), ${v.measurementSummary.instruments} instrument(s), ${v.measurementSummary.operators} operator(s); ${v.measurementSummary.failing} would not pass now`,
      bold: true,
    },
    v.measurements.length
      ? table(
          ['Lot', 'Container', 'Instrument', 'Operator', 'Measured (UTC)', 'r', 'Verdict now'],
          v.measurements.map((x) => [
            x.lot,
            x.container,
            x.instrument,
            x.operator,
            x.measuredAt.slice(0, 16),
            fmt(x.correlation),
            x.verdict,
          ]),
        )
      : { text: 'No passed measurement of this material yet.', fontSize: 8, margin: [0, 2, 0, 10] },
    { text: '3. Closest other materials (both directions)', bold: true },
    v.closest.length
      ? table(
          ['Material', 'Highest r', 'Distance to the r limit', 'Gate'],
          v.closest.map((x) => [
            `${x.materialCode} ${x.materialName}`,
            fmt(x.highestCorrelation),
            fmt(x.margin),
            x.state,
          ]),
        )
      : { text: 'No other approved material of this technique.', fontSize: 8, margin: [0, 2, 0, 10] },
    { text: '4. Suggested correlation limit', bold: true },
    {
      text: `Lowest true match ${fmt(v.suggested.lowestTrue)}; closest other material ${fmt(v.suggested.highestOther)}; suggested limit ${fmt(v.suggested.correlation)}. ${v.suggested.note}`,
      fontSize: 8,
      margin: [0, 2, 0, 10],
    },
    {
      text: v.gatePassed
        ? 'Specificity gate: passed.'
        : 'Specificity gate: refused; approved under an override signed by two QA managers (see the method version).',
      bold: true,
    },
  ];
  return renderPdf({
    info: { title: `Validation record ${v.material.code} version ${m.version}` },
    pageSize: 'A4',
    pageMargins: [36, 36, 36, 40],
    defaultStyle: { fontSize: 9 },
    content,
    footer: (page: number, pages: number) => ({
      text: `${v.material.code} method version ${m.version} · page ${page} of ${pages}`,
      fontSize: 7,
      alignment: 'center',
    }),
  });
}
