/**
 * Zoomable overlay of this reference with another reference of the same grade (chosen from a
 * list), wavenumber high to low, with this reference's characteristic bands as ticks.
 */
import { useMemo, useState } from 'react';
import { ErrorNote } from '../../../components/ErrorNote';
import { Field, Select } from '../../../components/Field';
import { SpectrumPlot, type PlotBand } from '../../../components/SpectrumPlot';
import { useReferenceOverlay, type StoredBand } from '../api';

export function ReferenceOverlay({
  referenceId,
  code,
  bands,
}: {
  referenceId: number;
  code: string;
  bands: StoredBand[];
}) {
  const overlay = useReferenceOverlay(referenceId);
  const others = useMemo(() => overlay.data?.traces.filter((t) => !t.isThis) ?? [], [overlay.data]);
  const [otherId, setOtherId] = useState<number | null>(null);
  const self = overlay.data?.traces.find((t) => t.isThis);
  const other = others.find((t) => t.referenceId === (otherId ?? others[0]?.referenceId)) ?? null;
  const plotBands: PlotBand[] = useMemo(
    () => bands.map((b) => ({ position: b.position, label: b.shownAssignment ?? undefined })),
    [bands],
  );

  if (overlay.isError) return <ErrorNote error={overlay.error} onRetry={() => void overlay.refetch()} />;
  if (!self) return <p className="text-sm text-muted">Loading the spectrum…</p>;
  return (
    <div className="flex flex-col gap-2">
      {others.length > 0 ? (
        <Field id={`overlay-${referenceId}`} label="Compare with" className="max-w-sm">
          <Select
            id={`overlay-${referenceId}`}
            value={other?.referenceId ?? ''}
            onChange={(e) => setOtherId(Number(e.target.value))}
          >
            {others.map((t) => (
              <option key={t.referenceId} value={t.referenceId}>
                {t.code} ({t.status})
              </option>
            ))}
          </Select>
        </Field>
      ) : (
        <p className="text-sm text-muted">This is the only reference of the grade; there is nothing to overlay yet.</p>
      )}
      <SpectrumPlot
        label={other ? `Reference ${code} overlaid with ${other.code}` : `Reference ${code}`}
        x={self.x}
        sample={self.y}
        sampleLabel={code}
        reference={other?.y ?? null}
        referenceX={other?.x ?? null}
        referenceLabel={other?.code ?? 'Reference'}
        bands={plotBands}
      />
    </div>
  );
}
