/**
 * Editor of a draft identity method version: every parameter of the engine's IdentityMethod,
 * validated with the server's own zod schema before sending (the server adds the engine's
 * cross-field checks and answers in words).
 */
import { useState, type FormEvent, type ReactNode } from 'react';
import { Button } from '../../../components/Button';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Input, Select, Textarea } from '../../../components/Field';
import {
  identityMethodSchema,
  SUGGESTED_RELATIVE_INTENSITY_TOLERANCE,
} from '../../../../server/modules/library/contract';
import { useUpdateMethod, type IdentityMethodParams, type MethodVersion } from '../api';

type Region = { from: string; to: string; label: string };

const str = (v: number | null | undefined) => (v === null || v === undefined ? '' : String(v));
const num = (s: string) => (s.trim() === '' ? NaN : Number(s.replace(',', '.')));
const optNum = (s: string) => (s.trim() === '' ? null : Number(s.replace(',', '.')));

function NumField({
  id,
  label,
  value,
  onChange,
  hint,
  unit,
}: {
  id: string;
  label: string;
  value: string;
  onChange: (v: string) => void;
  hint?: ReactNode;
  unit?: string;
}) {
  return (
    <Field id={id} label={unit ? `${label} (${unit})` : label} hint={hint}>
      <Input
        id={id}
        inputMode="decimal"
        value={value}
        onChange={(e) => onChange(e.target.value)}
        className="tabular-nums"
      />
    </Field>
  );
}

export function MethodForm({ method, onDone }: { method: MethodVersion; onDone: () => void }) {
  const p = method.params;
  const update = useUpdateMethod();
  const [f, setF] = useState({
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
  });
  const [regions, setRegions] = useState<Region[]>(
    p.excludedRegions.map((r) => ({ from: str(r.from), to: str(r.to), label: r.label })),
  );
  const [problems, setProblems] = useState<string[]>([]);
  const set = (k: keyof typeof f) => (v: string) => setF((x) => ({ ...x, [k]: v }));

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
      <fieldset className="grid gap-3 sm:grid-cols-3">
        <legend className="mb-1 text-sm font-semibold">Range and preparation</legend>
        <Field id={id('tech')} label="Technique">
          <Select id={id('tech')} value={f.technique} onChange={(e) => set('technique')(e.target.value)}>
            <option value="mid-ir-atr">Mid-IR, ATR</option>
            <option value="mid-ir-transmission">Mid-IR, transmission</option>
            <option value="nir">Near-IR</option>
          </Select>
        </Field>
        <NumField id={id('from')} label="Range from" unit="cm⁻¹" value={f.from} onChange={set('from')} />
        <NumField id={id('to')} label="Range to" unit="cm⁻¹" value={f.to} onChange={set('to')} />
        <NumField id={id('grid')} label="Grid step" unit="cm⁻¹" value={f.gridStep} onChange={set('gridStep')} />
        <Field id={id('base')} label="Baseline">
          <Select id={id('base')} value={f.baseline} onChange={(e) => set('baseline')(e.target.value)}>
            <option value="none">none</option>
            <option value="offset">offset (subtract the minimum)</option>
            <option value="linear">linear</option>
            <option value="iterative">iterative (airPLS)</option>
          </Select>
        </Field>
        <Field id={id('norm')} label="Normalisation">
          <Select id={id('norm')} value={f.normalisation} onChange={(e) => set('normalisation')(e.target.value)}>
            <option value="none">none</option>
            <option value="snv">SNV</option>
            <option value="vector">vector</option>
          </Select>
        </Field>
        <NumField
          id={id('win')}
          label="Savitzky-Golay window"
          unit="points"
          value={f.windowSize}
          onChange={set('windowSize')}
        />
        <NumField id={id('poly')} label="Polynomial order" value={f.polynomial} onChange={set('polynomial')} />
        <Field id={id('der')} label="Derivative">
          <Select id={id('der')} value={f.derivative} onChange={(e) => set('derivative')(e.target.value)}>
            <option value="0">0 (smoothing only)</option>
            <option value="1">1st</option>
            <option value="2">2nd</option>
          </Select>
        </Field>
      </fieldset>
      <fieldset className="flex flex-col gap-2">
        <legend className="mb-1 text-sm font-semibold">Excluded regions</legend>
        {regions.map((r, i) => (
          <div key={i} className="flex flex-wrap items-end gap-2">
            <Field id={id(`rf${i}`)} label="From (cm⁻¹)">
              <Input
                id={id(`rf${i}`)}
                inputMode="decimal"
                className="w-28"
                value={r.from}
                onChange={(e) => setRegions(regions.map((x, j) => (j === i ? { ...x, from: e.target.value } : x)))}
              />
            </Field>
            <Field id={id(`rt${i}`)} label="To (cm⁻¹)">
              <Input
                id={id(`rt${i}`)}
                inputMode="decimal"
                className="w-28"
                value={r.to}
                onChange={(e) => setRegions(regions.map((x, j) => (j === i ? { ...x, to: e.target.value } : x)))}
              />
            </Field>
            <Field id={id(`rl${i}`)} label="Why">
              <Input
                id={id(`rl${i}`)}
                className="w-56"
                value={r.label}
                onChange={(e) => setRegions(regions.map((x, j) => (j === i ? { ...x, label: e.target.value } : x)))}
              />
            </Field>
            <Button variant="quiet" onClick={() => setRegions(regions.filter((_, j) => j !== i))}>
              Remove region
            </Button>
          </div>
        ))}
        <div>
          <Button onClick={() => setRegions([...regions, { from: '', to: '', label: '' }])}>Add excluded region</Button>
        </div>
      </fieldset>
      <fieldset className="grid gap-3 sm:grid-cols-3">
        <legend className="mb-1 text-sm font-semibold">Acceptance criteria</legend>
        <NumField
          id={id('minr')}
          label="Minimum correlation coefficient (r)"
          value={f.minCorrelation}
          onChange={set('minCorrelation')}
        />
        <NumField
          id={id('mind')}
          label="Minimum correlation coefficient (r) of the first derivatives"
          hint="Empty: not used"
          value={f.minDerivativeCorrelation}
          onChange={set('minDerivativeCorrelation')}
        />
        <NumField
          id={id('maha')}
          label="Maximum Mahalanobis distance"
          hint="Empty: not used"
          value={f.maxMahalanobis}
          onChange={set('maxMahalanobis')}
        />
        <NumField
          id={id('qres')}
          label="Spectral residual (Q): confidence of its limit"
          hint="The limit is derived from the references (leave one out); e.g. 0.99. Empty: not used"
          value={f.residualConfidence}
          onChange={set('residualConfidence')}
        />
        <Field id={id('tolm')} label="Band tolerance">
          <Select id={id('tolm')} value={f.toleranceMode} onChange={(e) => set('toleranceMode')(e.target.value)}>
            <option value="relative">% of the band position</option>
            <option value="absolute">cm⁻¹ everywhere</option>
          </Select>
        </Field>
        <NumField
          id={id('tolv')}
          label={f.toleranceMode === 'absolute' ? 'Tolerance (cm⁻¹)' : 'Tolerance (%)'}
          value={f.toleranceValue}
          onChange={set('toleranceValue')}
        />
        <NumField
          id={id('wt')}
          label="Width tolerance (fraction of band width)"
          hint="Empty: off"
          value={f.widthTolerance}
          onChange={set('widthTolerance')}
        />
        <NumField
          id={id('pp')}
          label="Band picking: prominence (fraction of strongest)"
          hint="Empty: band concordance off"
          value={f.peakProminence}
          onChange={set('peakProminence')}
        />
        <NumField
          id={id('xb')}
          label="Extra band limit (fraction of strongest)"
          hint="Empty: not used"
          value={f.maxExtraBandProminence}
          onChange={set('maxExtraBandProminence')}
        />
        <Field
          id={id('ri')}
          label="Relative band intensity"
          hint="Ph. Eur. 2.2.24: band positions and relative sizes. Needs band picking."
        >
          <Select id={id('ri')} value={f.relativeIntensity} onChange={(e) => set('relativeIntensity')(e.target.value)}>
            <option value="off">not compared</option>
            <option value="on">compared with the reference</option>
          </Select>
        </Field>
        {f.relativeIntensity === 'on' && (
          <NumField
            id={id('rit')}
            label="Relative intensity tolerance (fraction of strongest band)"
            hint={`Each band's height relative to the strongest may differ by this much; ${SUGGESTED_RELATIVE_INTENSITY_TOLERANCE} is a usual start.`}
            value={f.relativeIntensityTolerance}
            onChange={set('relativeIntensityTolerance')}
          />
        )}
        <NumField
          id={id('comp')}
          label="Distance model: components"
          hint="Empty: no distance model"
          value={f.components}
          onChange={set('components')}
        />
        <NumField
          id={id('minref')}
          label="Distance model: minimum references"
          value={f.minReferences}
          onChange={set('minReferences')}
        />
      </fieldset>
      <fieldset className="grid gap-3 sm:grid-cols-3">
        <legend className="mb-1 text-sm font-semibold">Measurement quality</legend>
        <NumField
          id={id('qmin')}
          label="Minimum band height"
          unit="absorbance"
          value={f.minMaxAbsorbance}
          onChange={set('minMaxAbsorbance')}
        />
        <NumField
          id={id('qmax')}
          label="Saturation above"
          unit="absorbance"
          value={f.maxAbsorbance}
          onChange={set('maxAbsorbance')}
        />
        <NumField
          id={id('qsnr')}
          label="Minimum signal-to-noise"
          value={f.minSignalToNoise}
          onChange={set('minSignalToNoise')}
        />
      </fieldset>
      <Field id={id('note')} label="Change note (kept with this version)">
        <Textarea id={id('note')} value={f.changeNote} onChange={(e) => set('changeNote')(e.target.value)} />
      </Field>
      <Field id={id('reason')} label="Reason for this change" hint="Kept in the audit trail.">
        <Input id={id('reason')} value={f.reason} onChange={(e) => set('reason')(e.target.value)} />
      </Field>
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
