/**
 * QA approves a new check specification for an instrument: a site one (expected positions and
 * tolerances established at qualification, e.g. for an ATR accessory whose bands sit below the
 * transmission positions) or a pharmacopoeial column, with a written justification and an
 * e-signature.
 */
import { useEffect, useEffectEvent, useState } from 'react';
import { Button } from '../../../components/Button';
import { Input, SelectField } from '../../../components/Field';
import { isPolystyreneResult, type CheckBand, type SpecKind } from '../api';
import { SpecApprovalDialog, type ApprovalDialogProps } from './SpecApprovalDialog';

type Row = { nominal: string; tolerance: string };

export function ApproveSpecDialog({ open, instrument, ...dialog }: ApprovalDialogProps) {
  const current = instrument.specs.find((s) => s.status === 'approved' && s.checkType === 'polystyrene');
  const [kind, setKind] = useState<SpecKind>('site');
  const [rows, setRows] = useState<Row[]>([]);
  const lastFound = instrument.checks
    .map((c) => c.result)
    .filter(isPolystyreneResult)
    .find((r) => r.bands.every((b) => b.found !== null));

  // Each opening starts from the specification in force (read when opening, not on every refetch).
  const start = useEffectEvent(() => {
    setKind('site');
    setRows((current?.bands ?? []).map((b) => ({ nominal: b.nominal.toFixed(2), tolerance: b.tolerance.toFixed(1) })));
  });
  useEffect(() => {
    if (open) start();
  }, [open]);

  const fromLastCheck = () => {
    if (!lastFound) return;
    setRows(
      lastFound.bands.map((b) => ({
        nominal: (Math.round(b.found! * 100) / 100).toFixed(2),
        tolerance: b.tolerance.toFixed(1),
      })),
    );
  };

  return (
    <SpecApprovalDialog
      open={open}
      instrument={instrument}
      {...dialog}
      title={`New check specification for ${instrument.name}`}
      meaningText={`approve this check specification for ${instrument.name}, for the reason written above; every later instrument check is judged against it`}
      confirmLabel="Approve specification"
      hint="At least 20 characters; signed with the specification and kept in the audit trail."
      spec={(justification) => {
        let bands: CheckBand[] | undefined;
        if (kind === 'site') {
          bands = rows.map((r) => ({
            nominal: Number(r.nominal.replace(',', '.')),
            tolerance: Number(r.tolerance.replace(',', '.')),
          }));
          if (
            bands.length < 3 ||
            bands.some((b) => !Number.isFinite(b.nominal) || !Number.isFinite(b.tolerance) || b.tolerance <= 0)
          )
            return 'A site specification needs at least three bands, each with a position and a positive tolerance.';
        }
        return { checkType: 'polystyrene', kind, bands, justification };
      }}
    >
      <SelectField id="spec-kind" label="Kind" value={kind} onChange={(e) => setKind(e.target.value as SpecKind)}>
        <option value="site">Site specification (positions established at qualification)</option>
        <option value="pharmacopoeia-ft">Ph. Eur. 2.2.24, FT tolerances</option>
        <option value="pharmacopoeia-monochromator">Ph. Eur. 2.2.24, monochromator tolerances</option>
      </SelectField>
      {kind === 'site' && (
        <div className="flex max-h-64 flex-col gap-2 overflow-auto">
          {lastFound && (
            <div>
              <Button onClick={fromLastCheck}>Take the positions found in the latest check</Button>
            </div>
          )}
          <table className="text-sm" aria-label="Expected bands">
            <thead>
              <tr>
                <th className="pr-2 text-left font-medium">Expected position (cm⁻¹)</th>
                <th className="pr-2 text-left font-medium">Tolerance (± cm⁻¹)</th>
                <th />
              </tr>
            </thead>
            <tbody>
              {rows.map((r, i) => (
                <tr key={i}>
                  <td className="pr-2 pb-1">
                    <Input
                      aria-label={`Expected position ${i + 1}`}
                      inputMode="decimal"
                      className="w-32 tabular-nums"
                      value={r.nominal}
                      onChange={(e) => setRows(rows.map((x, j) => (j === i ? { ...x, nominal: e.target.value } : x)))}
                    />
                  </td>
                  <td className="pr-2 pb-1">
                    <Input
                      aria-label={`Tolerance ${i + 1}`}
                      inputMode="decimal"
                      className="w-24 tabular-nums"
                      value={r.tolerance}
                      onChange={(e) => setRows(rows.map((x, j) => (j === i ? { ...x, tolerance: e.target.value } : x)))}
                    />
                  </td>
                  <td className="pb-1">
                    <Button variant="quiet" onClick={() => setRows(rows.filter((_, j) => j !== i))}>
                      Remove
                    </Button>
                  </td>
                </tr>
              ))}
            </tbody>
          </table>
          <div>
            <Button onClick={() => setRows([...rows, { nominal: '', tolerance: '1.0' }])}>Add band</Button>
          </div>
        </div>
      )}
    </SpecApprovalDialog>
  );
}
