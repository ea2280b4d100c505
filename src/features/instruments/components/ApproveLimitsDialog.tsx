/**
 * QA approves the limits of a check beyond polystyrene (ATR blank, noise figure, NIR wavelength
 * accuracy, NIR photometric noise) with a justification and an e-signature. Once approved, that
 * check is required before every test on the instrument. No limit is proposed: the numbers come
 * from the site's qualification and, for NIR, from the wavelength standard's certificate.
 */
import { useEffect, useState } from 'react';
import { Field, Input, Select, Textarea } from '../../../components/Field';
import { ReasonSignatureDialog } from '../../../components/ReasonSignatureDialog';
import { CHECK_TYPE_LABELS, useApproveSpec, type CheckType, type InstrumentDetail } from '../api';

type Extra = Exclude<CheckType, 'polystyrene'>;

const num = (s: string) => Number(s.trim().replace(',', '.'));

/** "2280-2400, 1900-2300" -> regions; null when a part cannot be read. */
function regions(text: string): { from: number; to: number }[] | null {
  const parts = text
    .split(/[;,]/)
    .map((p) => p.trim())
    .filter(Boolean);
  const out = parts.map((p) => p.split(/\s*(?:-|–|to)\s*/).map(num));
  return out.every((r) => r.length === 2 && r.every(Number.isFinite)) ? out.map(([from, to]) => ({ from, to })) : null;
}

export function ApproveLimitsDialog({
  open,
  instrument,
  printedName,
  needsUsername,
  onClose,
}: {
  open: boolean;
  instrument: InstrumentDetail;
  printedName: string;
  needsUsername: boolean;
  onClose: () => void;
}) {
  const approve = useApproveSpec();
  const types: Extra[] =
    instrument.technique === 'nir'
      ? ['nir-wavelength', 'nir-photometric-noise']
      : instrument.sampling === 'atr'
        ? ['atr-blank', 'noise']
        : ['noise'];
  const [type, setType] = useState<Extra>(types[0]);
  const [f, setF] = useState<Record<string, string>>({});
  const [problem, setProblem] = useState<string | null>(null);
  useEffect(() => {
    if (open) {
      setF({});
      setProblem(null);
    }
  }, [open]);
  const set = (k: string) => (e: { target: { value: string } }) => setF({ ...f, [k]: e.target.value });
  const v = (k: string) => f[k] ?? '';

  function limits(): unknown {
    switch (type) {
      case 'atr-blank':
        return {
          maxAbsorbance: num(v('max')),
          range: { from: num(v('from')), to: num(v('to')) },
          excluded: regions(v('excluded')) ?? [],
        };
      case 'noise':
        return {
          region: { from: num(v('from')), to: num(v('to')) },
          maxRms: num(v('max')),
          maxPeakToPeak: v('pp').trim() ? num(v('pp')) : null,
        };
      case 'nir-wavelength':
        return {
          standard: v('standard').trim(),
          bands: v('bands')
            .split(/\n/)
            .map((l) => l.trim())
            .filter(Boolean)
            .map((l) => {
              const [nominal, tolerance] = l.split(/\s*(?:±|\+-|\s)\s*/).map(num);
              return { nominal, tolerance };
            }),
          ...(v('window').trim() ? { searchWindow: num(v('window')) } : {}),
        };
      case 'nir-photometric-noise':
        return {
          fromNm: num(v('from')),
          toNm: num(v('to')),
          ...(v('segment').trim() ? { segmentNm: num(v('segment')) } : {}),
          maxMeanRms: num(v('max')),
        };
    }
  }

  return (
    <ReasonSignatureDialog
      open={open}
      title={`New check limits for ${instrument.name}`}
      meaningText={`approve these check limits for ${instrument.name}; the check becomes required before every test`}
      printedName={printedName}
      needsUsername={needsUsername}
      confirmLabel="Approve limits"
      busy={approve.isPending}
      error={problem ?? approve.error}
      onCancel={() => {
        approve.reset();
        onClose();
      }}
      reason={{
        label: 'Justification',
        hint: 'Where the limits come from (qualification report, certificate); at least 20 characters.',
        minLength: 20,
        tooShort: 'Write a justification of at least 20 characters.',
      }}
      onSign={(signature, justification) => {
        if (type === 'atr-blank' && v('excluded').trim() && !regions(v('excluded')))
          return setProblem('Write the excluded regions as from-to pairs, e.g. 2280-2400, 1900-2300.');
        setProblem(null);
        approve.mutate(
          { id: instrument.id, spec: { checkType: type, kind: 'site', limits: limits(), justification }, signature },
          { onSuccess: onClose },
        );
      }}
    >
      <Field id="lim-type" label="Check">
        <Select id="lim-type" value={type} onChange={(e) => setType(e.target.value as Extra)}>
          {types.map((t) => (
            <option key={t} value={t}>
              {CHECK_TYPE_LABELS[t]}
            </option>
          ))}
        </Select>
      </Field>
      {(type === 'atr-blank' || type === 'noise') && (
        <div className="grid grid-cols-2 gap-2">
          <Field id="lim-from" label={type === 'noise' ? 'Quiet region from (cm⁻¹)' : 'Checked from (cm⁻¹)'}>
            <Input id="lim-from" inputMode="decimal" value={v('from')} onChange={set('from')} />
          </Field>
          <Field id="lim-to" label="to (cm⁻¹)">
            <Input id="lim-to" inputMode="decimal" value={v('to')} onChange={set('to')} />
          </Field>
        </div>
      )}
      {type === 'atr-blank' && (
        <>
          <Field id="lim-max" label="Largest band height (absorbance)">
            <Input id="lim-max" inputMode="decimal" value={v('max')} onChange={set('max')} />
          </Field>
          <Field
            id="lim-ex"
            label="Regions not checked (cm⁻¹)"
            hint="e.g. atmospheric CO2, a diamond crystal's own band"
          >
            <Input id="lim-ex" value={v('excluded')} onChange={set('excluded')} />
          </Field>
        </>
      )}
      {type === 'noise' && (
        <div className="grid grid-cols-2 gap-2">
          <Field id="lim-max" label="Largest RMS noise (absorbance)">
            <Input id="lim-max" inputMode="decimal" value={v('max')} onChange={set('max')} />
          </Field>
          <Field id="lim-pp" label="Largest peak to peak (optional)">
            <Input id="lim-pp" inputMode="decimal" value={v('pp')} onChange={set('pp')} />
          </Field>
        </div>
      )}
      {type === 'nir-wavelength' && (
        <>
          <Field id="lim-std" label="Standard and certificate">
            <Input id="lim-std" value={v('standard')} onChange={set('standard')} />
          </Field>
          <Field
            id="lim-bands"
            label="Certified positions (nm)"
            hint="One per line: position and tolerance, e.g. 1261.8 ±1.0"
          >
            <Textarea id="lim-bands" value={v('bands')} onChange={set('bands')} />
          </Field>
          <Field id="lim-win" label="Search window (± nm, optional; default 5)">
            <Input id="lim-win" inputMode="decimal" value={v('window')} onChange={set('window')} />
          </Field>
        </>
      )}
      {type === 'nir-photometric-noise' && (
        <div className="grid grid-cols-2 gap-2">
          <Field id="lim-from" label="From (nm)">
            <Input id="lim-from" inputMode="decimal" value={v('from')} onChange={set('from')} />
          </Field>
          <Field id="lim-to" label="to (nm)">
            <Input id="lim-to" inputMode="decimal" value={v('to')} onChange={set('to')} />
          </Field>
          <Field id="lim-seg" label="Segment (nm, default 100)">
            <Input id="lim-seg" inputMode="decimal" value={v('segment')} onChange={set('segment')} />
          </Field>
          <Field id="lim-max" label="Largest mean RMS (absorbance)">
            <Input id="lim-max" inputMode="decimal" value={v('max')} onChange={set('max')} />
          </Field>
        </div>
      )}
    </ReasonSignatureDialog>
  );
}
