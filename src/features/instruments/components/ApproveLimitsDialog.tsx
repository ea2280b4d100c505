/**
 * QA approves the limits of a check beyond polystyrene (ATR blank, noise figure, NIR wavelength
 * accuracy, NIR photometric noise) with a justification and an e-signature. Once approved, that
 * check is required before every test on the instrument. No limit is proposed: the numbers come
 * from the site's qualification and, for NIR, from the wavelength standard's certificate.
 */
import { useEffect, useState } from 'react';
import { InputField, SelectField, TextareaField } from '../../../components/Field';
import { CHECK_TYPE_LABELS, type CheckType } from '../api';
import { SpecApprovalDialog, type ApprovalDialogProps } from './SpecApprovalDialog';

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

export function ApproveLimitsDialog({ open, instrument, ...dialog }: ApprovalDialogProps) {
  const types: Extra[] =
    instrument.technique === 'nir'
      ? ['nir-wavelength', 'nir-photometric-noise']
      : instrument.sampling === 'atr'
        ? ['atr-blank', 'noise']
        : ['noise'];
  const [type, setType] = useState<Extra>(types[0]);
  const [f, setF] = useState<Record<string, string>>({});
  useEffect(() => {
    if (open) setF({});
  }, [open]);
  const set = (k: string) => (e: { target: { value: string } }) => setF({ ...f, [k]: e.target.value });
  const v = (k: string) => f[k] ?? '';
  /** A number typed as text, read on sending. */
  const decimal = (id: string, key: string, label: string) => (
    <InputField id={id} label={label} inputMode="decimal" value={v(key)} onChange={set(key)} />
  );

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
    <SpecApprovalDialog
      open={open}
      instrument={instrument}
      {...dialog}
      title={`New check limits for ${instrument.name}`}
      meaningText={`approve these check limits for ${instrument.name}; the check becomes required before every test`}
      confirmLabel="Approve limits"
      hint="Where the limits come from (qualification report, certificate); at least 20 characters."
      spec={(justification) =>
        type === 'atr-blank' && v('excluded').trim() && !regions(v('excluded'))
          ? 'Write the excluded regions as from-to pairs, e.g. 2280-2400, 1900-2300.'
          : { checkType: type, kind: 'site', limits: limits(), justification }
      }
    >
      <SelectField id="lim-type" label="Check" value={type} onChange={(e) => setType(e.target.value as Extra)}>
        {types.map((t) => (
          <option key={t} value={t}>
            {CHECK_TYPE_LABELS[t]}
          </option>
        ))}
      </SelectField>
      {(type === 'atr-blank' || type === 'noise') && (
        <div className="grid grid-cols-2 gap-2">
          {decimal('lim-from', 'from', type === 'noise' ? 'Quiet region from (cm⁻¹)' : 'Checked from (cm⁻¹)')}
          {decimal('lim-to', 'to', 'to (cm⁻¹)')}
        </div>
      )}
      {type === 'atr-blank' && (
        <>
          {decimal('lim-max', 'max', 'Largest band height (absorbance)')}
          <InputField
            id="lim-ex"
            label="Regions not checked (cm⁻¹)"
            hint="e.g. atmospheric CO2, a diamond crystal's own band"
            value={v('excluded')}
            onChange={set('excluded')}
          />
        </>
      )}
      {type === 'noise' && (
        <div className="grid grid-cols-2 gap-2">
          {decimal('lim-max', 'max', 'Largest RMS noise (absorbance)')}
          {decimal('lim-pp', 'pp', 'Largest peak to peak (optional)')}
        </div>
      )}
      {type === 'nir-wavelength' && (
        <>
          <InputField id="lim-std" label="Standard and certificate" value={v('standard')} onChange={set('standard')} />
          <TextareaField
            id="lim-bands"
            label="Certified positions (nm)"
            hint="One per line: position and tolerance, e.g. 1261.8 ±1.0"
            value={v('bands')}
            onChange={set('bands')}
          />
          {decimal('lim-win', 'window', 'Search window (± nm, optional; default 5)')}
        </>
      )}
      {type === 'nir-photometric-noise' && (
        <div className="grid grid-cols-2 gap-2">
          {decimal('lim-from', 'from', 'From (nm)')}
          {decimal('lim-to', 'to', 'to (nm)')}
          {decimal('lim-seg', 'segment', 'Segment (nm, default 100)')}
          {decimal('lim-max', 'max', 'Largest mean RMS (absorbance)')}
        </div>
      )}
    </SpecApprovalDialog>
  );
}
