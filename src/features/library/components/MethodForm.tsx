/**
 * Editor of a draft identity method version: every parameter of the engine's IdentityMethod,
 * validated with the server's own zod schema before sending (the server adds the engine's
 * cross-field checks and answers in words).
 */
import { useState, type FormEvent } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { InputField, SelectField, TextareaField } from '../../../components/Field';
import {
  identityMethodSchema,
  SUGGESTED_RELATIVE_INTENSITY_TOLERANCE,
} from '../../../../server/modules/library/contract';
import { useUpdateMethod, type IdentityMethodParams, type MethodVersion } from '../api';

type Region = { from: string; to: string; label: string };

const str = (v: number | null | undefined) => (v === null || v === undefined ? '' : String(v));
const num = (s: string) => (s.trim() === '' ? NaN : Number(s.replace(',', '.')));
const optNum = (s: string) => (s.trim() === '' ? null : Number(s.replace(',', '.')));

type Form = ReturnType<typeof initialForm>;
type Key = Exclude<keyof Form, 'changeNote' | 'reason'>;

/**
 * One row of the editor: a number (typed as text, read on sending) or a choice. `id` is the row's
 * part of the element id; `when` hides a row that only applies with another row's choice.
 */
type Row = {
  key: Key;
  id: string;
  label: string | ((f: Form) => string);
  hint?: string;
  when?: (f: Form) => boolean;
} & ({ unit?: string; options?: undefined } | { options: [value: string, words: string][] });

/** The cells of one excluded region. */
const REGION_CELLS: { key: keyof Region; id: string; label: string; className: string; decimal: boolean }[] = [
  { key: 'from', id: 'rf', label: 'From (cm⁻¹)', className: 'w-28', decimal: true },
  { key: 'to', id: 'rt', label: 'To (cm⁻¹)', className: 'w-28', decimal: true },
  { key: 'label', id: 'rl', label: 'Why', className: 'w-56', decimal: false },
];

const NOT_USED = 'Empty: not used';

const PREPARATION: Row[] = [
  {
    key: 'technique',
    id: 'tech',
    label: 'Technique',
    options: [
      ['mid-ir-atr', 'Mid-IR, ATR'],
      ['mid-ir-transmission', 'Mid-IR, transmission'],
      ['nir', 'Near-IR'],
    ],
  },
  { key: 'from', id: 'from', label: 'Range from', unit: 'cm⁻¹' },
  { key: 'to', id: 'to', label: 'Range to', unit: 'cm⁻¹' },
  { key: 'gridStep', id: 'grid', label: 'Grid step', unit: 'cm⁻¹' },
  {
    key: 'baseline',
    id: 'base',
    label: 'Baseline',
    options: [
      ['none', 'none'],
      ['offset', 'offset (subtract the minimum)'],
      ['linear', 'linear'],
      ['iterative', 'iterative (airPLS)'],
    ],
  },
  {
    key: 'normalisation',
    id: 'norm',
    label: 'Normalisation',
    options: [
      ['none', 'none'],
      ['snv', 'SNV'],
      ['vector', 'vector'],
    ],
  },
  { key: 'windowSize', id: 'win', label: 'Savitzky-Golay window', unit: 'points' },
  { key: 'polynomial', id: 'poly', label: 'Polynomial order' },
  {
    key: 'derivative',
    id: 'der',
    label: 'Derivative',
    options: [
      ['0', '0 (smoothing only)'],
      ['1', '1st'],
      ['2', '2nd'],
    ],
  },
];

const ACCEPTANCE: Row[] = [
  { key: 'minCorrelation', id: 'minr', label: 'Minimum correlation coefficient (r)' },
  {
    key: 'minDerivativeCorrelation',
    id: 'mind',
    label: 'Minimum correlation coefficient (r) of the first derivatives',
    hint: NOT_USED,
  },
  { key: 'maxMahalanobis', id: 'maha', label: 'Maximum Mahalanobis distance', hint: NOT_USED },
  {
    key: 'residualConfidence',
    id: 'qres',
    label: 'Spectral residual (Q): confidence of its limit',
    hint: 'The limit is derived from the references (leave one out); e.g. 0.99. Empty: not used',
  },
  {
    key: 'toleranceMode',
    id: 'tolm',
    label: 'Band tolerance',
    options: [
      ['relative', '% of the band position'],
      ['absolute', 'cm⁻¹ everywhere'],
    ],
  },
  {
    key: 'toleranceValue',
    id: 'tolv',
    label: (f) => (f.toleranceMode === 'absolute' ? 'Tolerance (cm⁻¹)' : 'Tolerance (%)'),
  },
  { key: 'widthTolerance', id: 'wt', label: 'Width tolerance (fraction of band width)', hint: 'Empty: off' },
  {
    key: 'peakProminence',
    id: 'pp',
    label: 'Band picking: prominence (fraction of strongest)',
    hint: 'Empty: band concordance off',
  },
  { key: 'maxExtraBandProminence', id: 'xb', label: 'Extra band limit (fraction of strongest)', hint: NOT_USED },
  {
    key: 'relativeIntensity',
    id: 'ri',
    label: 'Relative band intensity',
    hint: 'Ph. Eur. 2.2.24: band positions and relative sizes. Needs band picking.',
    options: [
      ['off', 'not compared'],
      ['on', 'compared with the reference'],
    ],
  },
  {
    key: 'relativeIntensityTolerance',
    id: 'rit',
    label: 'Relative intensity tolerance (fraction of strongest band)',
    hint: `Each band's height relative to the strongest may differ by this much; ${SUGGESTED_RELATIVE_INTENSITY_TOLERANCE} is a usual start.`,
    when: (f) => f.relativeIntensity === 'on',
  },
  { key: 'components', id: 'comp', label: 'Distance model: components', hint: 'Empty: no distance model' },
  { key: 'minReferences', id: 'minref', label: 'Distance model: minimum references' },
];

const QUALITY: Row[] = [
  { key: 'minMaxAbsorbance', id: 'qmin', label: 'Minimum band height', unit: 'absorbance' },
  { key: 'maxAbsorbance', id: 'qmax', label: 'Saturation above', unit: 'absorbance' },
  { key: 'minSignalToNoise', id: 'qsnr', label: 'Minimum signal-to-noise' },
];

/** A fieldset of rows, three to a line on wide screens. */
function RowGroup({
  legend,
  rows,
  f,
  set,
  id,
}: {
  legend: string;
  rows: Row[];
  f: Form;
  set: (k: Key) => (v: string) => void;
  id: (k: string) => string;
}) {
  return (
    <fieldset className="grid gap-3 sm:grid-cols-3">
      <legend className="mb-1 text-sm font-semibold">{legend}</legend>
      {rows
        .filter((r) => !r.when || r.when(f))
        .map((r) => {
          const label = typeof r.label === 'function' ? r.label(f) : r.label;
          return r.options ? (
            <SelectField
              key={r.key}
              id={id(r.id)}
              label={label}
              hint={r.hint}
              value={f[r.key]}
              onChange={(e) => set(r.key)(e.target.value)}
            >
              {r.options.map(([value, words]) => (
                <option key={value} value={value}>
                  {words}
                </option>
              ))}
            </SelectField>
          ) : (
            <InputField
              key={r.key}
              id={id(r.id)}
              label={r.unit ? `${label} (${r.unit})` : label}
              hint={r.hint}
              inputMode="decimal"
              value={f[r.key]}
              onChange={(e) => set(r.key)(e.target.value)}
              className="tabular-nums"
            />
          );
        })}
    </fieldset>
  );
}

function initialForm(method: MethodVersion) {
  const p = method.params;
  return {
    technique: p.technique,
    from: str(p.range.from),
    to: str(p.range.to),
    gridStep: str(p.gridStep),
    baseline: p.baseline,
    normalisation: p.normalisation,
    windowSize: str(p.smoothing.windowSize),
    polynomial: str(p.smoothing.polynomial),
    derivative: str(p.smoothing.derivative),
    minCorrelation: str(p.thresholds.minCorrelation),
    minDerivativeCorrelation: str(p.thresholds.minDerivativeCorrelation),
    maxMahalanobis: str(p.thresholds.maxMahalanobis),
    residualConfidence: str(p.thresholds.residualConfidence),
    toleranceMode: p.bandTolerance.mode,
    toleranceValue: str(p.bandTolerance.mode === 'absolute' ? p.bandTolerance.cm1 : p.bandTolerance.percent),
    widthTolerance: str(p.widthTolerance),
    peakProminence: str(p.peakProminence),
    maxExtraBandProminence: str(p.maxExtraBandProminence),
    relativeIntensity: p.relativeIntensityTolerance != null ? 'on' : 'off',
    relativeIntensityTolerance: str(p.relativeIntensityTolerance ?? SUGGESTED_RELATIVE_INTENSITY_TOLERANCE),
    minMaxAbsorbance: str(p.quality.minMaxAbsorbance),
    maxAbsorbance: str(p.quality.maxAbsorbance),
    minSignalToNoise: str(p.quality.minSignalToNoise),
    components: str(p.distanceModel?.components),
    minReferences: str(p.distanceModel?.minReferences),
    changeNote: method.changeNote ?? '',
    reason: '',
  };
}

export function MethodForm({ method, onDone }: { method: MethodVersion; onDone: () => void }) {
  const p = method.params;
  const update = useUpdateMethod();
  const [f, setF] = useState(() => initialForm(method));
  const [regions, setRegions] = useState<Region[]>(
    p.excludedRegions.map((r) => ({ from: str(r.from), to: str(r.to), label: r.label })),
  );
  const [problems, setProblems] = useState<string[]>([]);
  const set = (k: keyof Form) => (v: string) => setF((x) => ({ ...x, [k]: v }));

  const submit = (e: FormEvent) => {
    e.preventDefault();
    const candidate = {
      technique: f.technique,
      range: { from: num(f.from), to: num(f.to) },
      excludedRegions: regions.map((r) => ({ from: num(r.from), to: num(r.to), label: r.label.trim() })),
      gridStep: num(f.gridStep),
      baseline: f.baseline,
      normalisation: f.normalisation,
      smoothing: { windowSize: num(f.windowSize), polynomial: num(f.polynomial), derivative: num(f.derivative) },
      thresholds: {
        minCorrelation: num(f.minCorrelation),
        minDerivativeCorrelation: optNum(f.minDerivativeCorrelation),
        maxMahalanobis: optNum(f.maxMahalanobis),
        residualConfidence: optNum(f.residualConfidence),
      },
      bandTolerance:
        f.toleranceMode === 'absolute'
          ? { mode: 'absolute', cm1: num(f.toleranceValue) }
          : { mode: 'relative', percent: num(f.toleranceValue) },
      widthTolerance: optNum(f.widthTolerance),
      peakProminence: optNum(f.peakProminence),
      maxExtraBandProminence: optNum(f.maxExtraBandProminence),
      relativeIntensityTolerance: f.relativeIntensity === 'on' ? num(f.relativeIntensityTolerance) : null,
      quality: {
        minMaxAbsorbance: num(f.minMaxAbsorbance),
        maxAbsorbance: num(f.maxAbsorbance),
        minSignalToNoise: num(f.minSignalToNoise),
      },
      distanceModel:
        f.components.trim() === '' ? null : { components: num(f.components), minReferences: num(f.minReferences) },
    };
    const parsed = identityMethodSchema.safeParse(candidate);
    const out: string[] = [];
    if (!parsed.success) for (const i of parsed.error.issues) out.push(`${i.path.join('.') || 'method'}: ${i.message}`);
    if (f.reason.trim().length < 3) out.push('Give a reason for the change (at least 3 characters).');
    setProblems(out);
    if (out.length || !parsed.success) return;
    update.mutate(
      { id: method.id, params: parsed.data as IdentityMethodParams, changeNote: f.changeNote, reason: f.reason.trim() },
      { onSuccess: onDone },
    );
  };

  const id = (k: string) => `m${method.id}-${k}`;
  return (
    <form
      onSubmit={submit}
      noValidate
      aria-label={`Edit method version ${method.version}`}
      className="flex flex-col gap-4"
    >
      <RowGroup legend="Range and preparation" rows={PREPARATION} f={f} set={set} id={id} />
      <fieldset className="flex flex-col gap-2">
        <legend className="mb-1 text-sm font-semibold">Excluded regions</legend>
        {regions.map((r, i) => (
          <div key={i} className="flex flex-wrap items-end gap-2">
            {REGION_CELLS.map(({ key, id: part, label, className, decimal }) => (
              <InputField
                key={key}
                id={id(`${part}${i}`)}
                label={label}
                inputMode={decimal ? 'decimal' : undefined}
                className={className}
                value={r[key]}
                onChange={(e) => setRegions(regions.map((x, j) => (j === i ? { ...x, [key]: e.target.value } : x)))}
              />
            ))}
            <Button variant="quiet" onClick={() => setRegions(regions.filter((_, j) => j !== i))}>
              Remove region
            </Button>
          </div>
        ))}
        <div>
          <Button onClick={() => setRegions([...regions, { from: '', to: '', label: '' }])}>Add excluded region</Button>
        </div>
      </fieldset>
      <RowGroup legend="Acceptance criteria" rows={ACCEPTANCE} f={f} set={set} id={id} />
      <RowGroup legend="Measurement quality" rows={QUALITY} f={f} set={set} id={id} />
      <TextareaField
        id={id('note')}
        label="Change note (kept with this version)"
        value={f.changeNote}
        onChange={(e) => set('changeNote')(e.target.value)}
      />
      <InputField
        id={id('reason')}
        label="Reason for this change"
        hint="Kept in the audit trail."
        value={f.reason}
        onChange={(e) => set('reason')(e.target.value)}
      />
      {problems.length > 0 && <ErrorNote error={problems.join(' ')} />}
      {update.isError && <ErrorNote error={update.error} />}
      <div className="flex gap-2">
        <Button type="submit" variant="primary" busy={update.isPending}>
          Save draft
        </Button>
        <Button onClick={onDone}>Cancel</Button>
      </div>
    </form>
  );
}
