/**
 * Sampling of a lot (bench screen): the signed line clearance of the booth, then the sampling
 * record with every sampled container opened, sampled and resealed; afterwards the record and
 * each container's status with its printable status label.
 */
import { useState } from 'react';
import { Button, buttonClass } from '../../../components/Button';
import { DateTime } from '../../../components/DateTime';
import { ErrorNote } from '../../../components/ErrorNote';
import { Panel } from '../../../components/Panel';
import { InputField, SelectField } from '../../../components/Field';
import { bindTexts } from '../../../lib/form-state';
import { mutationSigning, type Signer } from '../../../lib/signing';
import { SignatureDialog } from '../../../components/SignatureDialog';
import { CONTAINER_STATUS_WORDS, RESERVE_UNITS } from '../../../../server/modules/sampling/contract';
import { SAMPLING_PLAN_LABELS } from '../../../../server/modules/suppliers/contract';
import { statusLabelsUrl, useLineClearance, useRecordSampling, useSampling } from '../api';

export function SamplingPanel({ lotId, me, canSample }: { lotId: number; me: Signer; canSample: boolean }) {
  const q = useSampling(lotId);
  const clear = useLineClearance(lotId);
  const record = useRecordSampling(lotId);
  const [v, setV] = useState({
    area: 'Sampling booth 1',
    previousUse: '',
    tool: '',
    qty: '50',
    unit: 'g' as (typeof RESERVE_UNITS)[number],
    location: '',
  });
  const bind = bindTexts(v, setV);
  const { area, previousUse, tool, qty, unit, location } = v;
  const [picked, setPicked] = useState<Set<number> | null>(null);
  const [dialog, setDialog] = useState<'clear' | 'sample' | null>(null);
  if (q.isPending) return <p className="text-sm text-muted">Loading the sampling record…</p>;
  if (q.isError) return <ErrorNote error={q.error} onRetry={() => void q.refetch()} />;
  const s = q.data;
  const plan = s.samplingPlan;
  const need = s.sampleCount ?? s.containers.length;
  const chosen = picked ?? new Set(s.containers.slice(0, need).map((c) => c.containerId));
  const clearance = s.clearances.at(-1) ?? null;
  const toggle = (id: number) => {
    const next = new Set(chosen);
    if (next.has(id)) next.delete(id);
    else next.add(id);
    setPicked(next);
  };
  return (
    <Panel id="sampling" title="Sampling and container status" className="mt-6 p-4" titleClassName="mb-1 text-lg">
      {plan && (
        <p className="mb-3 text-sm" data-testid="sampling-plan">
          Plan: {SAMPLING_PLAN_LABELS[plan]} · {need} of {s.containers.length} container(s) to sample.
        </p>
      )}
      {s.record ? (
        <div className="mb-3 text-sm" data-testid="sampling-record">
          <p>
            Sampled by {s.record.sampler.name} in {s.record.area}, <DateTime value={s.record.sampledAt} />, with{' '}
            {s.record.tool}. Reserve sample: {s.record.reserve.quantity} {s.record.reserve.unit} in{' '}
            {s.record.reserve.location}.
          </p>
          <p className="text-muted">
            Line clearance signed by {s.record.lineClearance.clearedBy.name},{' '}
            <DateTime value={s.record.lineClearance.clearedAt} />.
          </p>
        </div>
      ) : plan && canSample ? (
        !clearance ? (
          <div className="mb-3 grid gap-3 md:grid-cols-2">
            <InputField id="lc-area" label="Sampling booth or area" bench {...bind('area')} />
            <InputField
              id="lc-prev"
              label="Found in the booth before this lot (optional)"
              bench
              {...bind('previousUse')}
            />
            <div className="md:col-span-2">
              <Button size="bench" variant="primary" onClick={() => setDialog('clear')}>
                Sign line clearance
              </Button>
            </div>
          </div>
        ) : (
          <div className="mb-3 grid gap-3 md:grid-cols-2">
            <p className="text-sm md:col-span-2">
              Booth {clearance.area} cleared by {clearance.clearedBy.name}, <DateTime value={clearance.clearedAt} />.
            </p>
            <InputField id="sa-tool" label="Sampling tool" bench {...bind('tool')} />
            <InputField id="sa-loc" label="Reserve sample kept in" bench {...bind('location')} />
            <InputField id="sa-qty" label="Reserve sample quantity" bench inputMode="decimal" {...bind('qty')} />
            <SelectField id="sa-unit" label="Unit" bench {...bind('unit')}>
              {RESERVE_UNITS.map((u) => (
                <option key={u}>{u}</option>
              ))}
            </SelectField>
            <fieldset className="md:col-span-2">
              <legend className="mb-1 text-sm font-medium">
                Containers opened, sampled and resealed ({chosen.size} of at least {need})
              </legend>
              <div className="flex flex-wrap gap-2">
                {s.containers.map((c) => (
                  <label
                    key={c.containerId}
                    className="flex min-h-11 items-center gap-2 rounded border border-line px-2"
                  >
                    <input
                      type="checkbox"
                      checked={chosen.has(c.containerId)}
                      onChange={() => toggle(c.containerId)}
                      aria-label={`${c.label} opened, sampled and resealed`}
                    />
                    <span className="tabular-nums">{c.label}</span>
                  </label>
                ))}
              </div>
            </fieldset>
            <div className="md:col-span-2">
              <Button size="bench" variant="primary" onClick={() => setDialog('sample')}>
                Sign sampling record
              </Button>
            </div>
          </div>
        )
      ) : plan ? (
        <p className="mb-3 text-sm text-amber-ink">Not sampled yet: sampling precedes testing.</p>
      ) : null}
      <ul className="flex flex-wrap gap-2" aria-label="Container status">
        {s.containers.slice(0, 200).map((c) => (
          <li
            key={c.containerId}
            className="flex items-center gap-2 rounded-md border border-line px-2 py-1 text-sm"
            data-testid={`container-status-${c.label}`}
          >
            <span className="tabular-nums">{c.label}</span>
            <span className="font-semibold tracking-wide">{CONTAINER_STATUS_WORDS[c.status]}</span>
            {c.heldBy.length > 0 && <span className="text-amber-ink">({c.heldBy.join('; ')})</span>}
          </li>
        ))}
      </ul>
      <a
        className={`${buttonClass('secondary', 'bench')} mt-3`}
        href={statusLabelsUrl(lotId)}
        target="_blank"
        rel="noreferrer"
        data-testid="status-labels"
      >
        Print status labels (PDF)
      </a>
      <SignatureDialog
        open={dialog === 'clear'}
        title="Sign the line clearance"
        meaningText={`cleared ${area} for this lot: no material, label or container of another lot is left in it`}
        confirmLabel="Sign line clearance"
        {...mutationSigning(me, clear, () => setDialog(null))}
        onSign={(signature) =>
          clear.mutate(
            { area, previousUse: previousUse.trim() || null, signature },
            { onSuccess: () => setDialog(null) },
          )
        }
      />
      <SignatureDialog
        open={dialog === 'sample'}
        title="Sign the sampling record"
        meaningText={`opened, sampled and resealed the ${chosen.size} container(s) named, and kept the reserve sample`}
        confirmLabel="Sign sampling record"
        {...mutationSigning(me, record, () => setDialog(null))}
        onSign={(signature) =>
          record.mutate(
            {
              lineClearanceId: clearance?.id ?? 0,
              sampledAt: new Date().toISOString(),
              tool,
              containers: [...chosen].map((containerId) => ({
                containerId,
                opened: true,
                sampled: true,
                resealed: true,
              })),
              reserve: { quantity: Number(qty), unit, location },
              note: null,
              signature,
            },
            { onSuccess: () => setDialog(null) },
          )
        }
      />
    </Panel>
  );
}
