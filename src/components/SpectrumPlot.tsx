/**
 * Spectrum overlay on uPlot, drawn as the trade draws it: wavenumber falling from left to right,
 * absorbance up. Sample solid petrol, reference dashed grey; optional difference panel below in
 * amber with the same x range; excluded regions shaded; band ticks along the top edge with the
 * position and shift on hover. Drag across the plot to zoom, double-click to reset.
 * Drumline's own readout replaces the plotting library's legend: while the pointer is over the plot,
 * one small muted line above it gives the wavenumber and each trace's value there; a small key
 * under the plot shows the line style of each trace.
 * The plot is built in an effect after the page has painted, so the page never waits for it.
 * x may run either way (JCAMP files often run high to low); it is sorted for uPlot.
 */
import { useEffect, useId, useRef, useState } from 'react';
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import { formatShift, formatWavenumber } from '../lib/format';

export interface PlotBand {
  /** band position in cm⁻¹ */
  position: number;
  /** shift of the matching sample band from the reference band, cm⁻¹ (null: no match) */
  shift?: number | null;
  /** e.g. "C=O stretch" */
  label?: string;
  /** false draws the tick in the fail colour (missing or out of tolerance) */
  matched?: boolean;
}

export interface SpectrumPlotProps {
  /** wavenumbers (cm⁻¹) of sample, and of reference/difference unless referenceX is given */
  x: ArrayLike<number>;
  sample: ArrayLike<number>;
  reference?: ArrayLike<number> | null;
  /** wavenumbers of the reference when it has its own grid */
  referenceX?: ArrayLike<number> | null;
  /** sample − reference on x (same preparation) */
  difference?: ArrayLike<number> | null;
  sampleLabel?: string;
  referenceLabel?: string;
  yLabel?: string;
  /** regions left out of the comparison, shaded */
  excludedRegions?: { from: number; to: number }[];
  bands?: PlotBand[];
  height?: number;
  differenceHeight?: number;
  /** accessible description of the figure */
  label: string;
}

const C = {
  petrol: '#0f5e6e',
  muted: '#5f6673',
  amber: '#b7791f',
  line: '#d9dcd3',
  ink: '#1f2933',
  fail: '#b3261e',
  shade: 'rgba(95,102,115,0.12)',
};
const FONT = '12px "IBM Plex Sans", "DejaVu Sans", sans-serif';

/** ascending x with the y arrays in the same order */
function ascending(
  x: ArrayLike<number>,
  ...ys: (ArrayLike<number> | null | undefined)[]
): [number[], ...(number[] | null)[]] {
  const xs = Array.from(x);
  const rev = xs.length > 1 && xs[0] > xs[xs.length - 1];
  const out = ys.map((y) => (y ? (rev ? Array.from(y).reverse() : Array.from(y)) : null));
  return [rev ? xs.reverse() : xs, ...out];
}

function axes(yLabel: string, showX: boolean): uPlot.Axis[] {
  const grid = { stroke: C.line, width: 1 };
  return [
    {
      scale: 'x',
      label: showX ? 'Wavenumber (cm⁻¹)' : undefined,
      labelFont: FONT,
      font: FONT,
      stroke: C.ink,
      grid,
      ticks: { stroke: C.line },
      size: showX ? 40 : 24,
      values: (_u, vals) => vals.map((v) => (showX ? String(Math.round(v)) : '')),
    },
    {
      scale: 'y',
      label: yLabel,
      labelFont: FONT,
      font: FONT,
      stroke: C.ink,
      grid,
      ticks: { stroke: C.line },
      size: 56,
      values: (_u, vals) => vals.map((v) => +v.toFixed(3) + ''),
    },
  ];
}

function shadeExcluded(regions: { from: number; to: number }[] | undefined) {
  return (u: uPlot) => {
    if (!regions?.length) return;
    const { ctx, bbox } = u;
    ctx.save();
    ctx.fillStyle = C.shade;
    for (const r of regions) {
      const a = u.valToPos(Math.max(r.from, r.to), 'x', true);
      const b = u.valToPos(Math.min(r.from, r.to), 'x', true);
      const left = Math.max(bbox.left, Math.min(a, b));
      const right = Math.min(bbox.left + bbox.width, Math.max(a, b));
      if (right > left) ctx.fillRect(left, bbox.top, right - left, bbox.height);
    }
    ctx.restore();
  };
}

function drawBands(bands: PlotBand[] | undefined) {
  return (u: uPlot) => {
    if (!bands?.length) return;
    const { ctx, bbox } = u;
    const px = devicePixelRatio || 1;
    ctx.save();
    ctx.lineWidth = 2 * px;
    for (const b of bands) {
      const xPos = u.valToPos(b.position, 'x', true);
      if (xPos < bbox.left || xPos > bbox.left + bbox.width) continue;
      ctx.strokeStyle = b.matched === false ? C.fail : C.ink;
      ctx.beginPath();
      ctx.moveTo(xPos, bbox.top);
      ctx.lineTo(xPos, bbox.top + 9 * px);
      ctx.stroke();
    }
    ctx.restore();
  };
}

/** One entry of the plot's key: a short line in the trace's colour and style, and its name. */
function KeyLine({ colour, dashed, children }: { colour: string; dashed?: boolean; children: React.ReactNode }) {
  return (
    <span className="inline-flex items-center gap-1.5">
      <svg width="22" height="6" aria-hidden>
        <line
          x1="0"
          y1="3"
          x2="22"
          y2="3"
          stroke={colour}
          strokeWidth="2"
          strokeDasharray={dashed ? '5 3' : undefined}
        />
      </svg>
      {children}
    </span>
  );
}

export function SpectrumPlot({
  x,
  sample,
  reference,
  referenceX,
  difference,
  sampleLabel = 'Sample',
  referenceLabel = 'Reference',
  yLabel = 'Absorbance',
  excludedRegions,
  bands,
  height = 320,
  differenceHeight = 120,
  label,
}: SpectrumPlotProps) {
  const wrap = useRef<HTMLDivElement>(null);
  const mainEl = useRef<HTMLDivElement>(null);
  const diffEl = useRef<HTMLDivElement>(null);
  const [hover, setHover] = useState<{ left: number; band: PlotBand } | null>(null);
  const [readout, setReadout] = useState<{ x: number; values: { name: string; value: number | null }[] } | null>(null);
  const [ready, setReady] = useState(false);
  const descId = useId();

  useEffect(() => {
    const host = mainEl.current;
    const box = wrap.current;
    if (!host || !box) return;
    let main: uPlot | null = null;
    let diff: uPlot | null = null;
    let syncing = false;
    let cancelled = false;

    // Build after the browser has painted the page.
    const handle = window.setTimeout(() => {
      if (cancelled) return;
      const width = Math.max(200, box.clientWidth);
      const [xs, ys, ds] = ascending(x, sample, difference);
      let data: uPlot.AlignedData;
      if (reference && referenceX) {
        const [rx, ry] = ascending(referenceX, reference);
        data = uPlot.join([
          [xs, ys!],
          [rx, ry!],
        ]);
      } else if (reference) {
        const [, ry] = ascending(x, reference);
        data = [xs, ys!, ry!];
      } else data = [xs, ys!];

      const series: uPlot.Series[] = [
        { label: 'Wavenumber', value: (_u, v) => (v == null ? '—' : formatWavenumber(v)) },
        { label: sampleLabel, stroke: C.petrol, width: 1.5, value: (_u, v) => (v == null ? '—' : v.toFixed(4)) },
      ];
      if (reference)
        series.push({
          label: referenceLabel,
          stroke: C.muted,
          width: 1.5,
          dash: [6, 4],
          spanGaps: true,
          value: (_u, v) => (v == null ? '—' : v.toFixed(4)),
        });

      const syncX = (from: uPlot) => {
        const other = from === main ? diff : main;
        if (!other || syncing) return;
        syncing = true;
        other.setScale('x', { min: from.scales.x.min!, max: from.scales.x.max! });
        syncing = false;
      };

      const cursorKey = `spectrum-${descId}`;
      main = new uPlot(
        {
          width,
          height,
          scales: { x: { time: false, dir: -1 } },
          series,
          axes: axes(yLabel, !difference),
          legend: { show: false },
          cursor: { drag: { x: true, y: false, setScale: true }, sync: { key: cursorKey } },
          hooks: {
            drawClear: [shadeExcluded(excludedRegions)],
            draw: [drawBands(bands)],
            setScale: [(u, key) => key === 'x' && syncX(u)],
            setCursor: [
              (u) => {
                const idx = u.cursor.idx;
                if (idx == null || (u.cursor.left ?? -1) < 0) setReadout(null);
                else {
                  const at = (arr: ArrayLike<number | null | undefined> | undefined) => arr?.[idx] ?? null;
                  const values = [{ name: sampleLabel, value: at(u.data[1]) }];
                  if (reference) values.push({ name: referenceLabel, value: at(u.data[2]) });
                  if (ds && !(reference && referenceX)) values.push({ name: 'Sample − reference', value: at(ds) });
                  setReadout({ x: u.data[0][idx], values });
                }
              },
              (u) => {
                const left = u.cursor.left;
                if (!bands?.length || left == null || left < 0) return setHover(null);
                let best: PlotBand | null = null;
                let bestD = 8;
                for (const b of bands) {
                  const d = Math.abs(u.valToPos(b.position, 'x') - left);
                  if (d < bestD) {
                    bestD = d;
                    best = b;
                  }
                }
                setHover(best ? { left: u.valToPos(best.position, 'x') + u.over.offsetLeft, band: best } : null);
              },
            ],
          },
        },
        data,
        host,
      );

      if (difference && ds && diffEl.current) {
        diff = new uPlot(
          {
            width,
            height: differenceHeight,
            scales: { x: { time: false, dir: -1 } },
            series: [
              { label: 'Wavenumber', value: (_u, v) => (v == null ? '—' : formatWavenumber(v)) },
              {
                label: 'Sample − reference',
                stroke: C.amber,
                width: 1.2,
                value: (_u, v) => (v == null ? '—' : v.toFixed(4)),
              },
            ],
            axes: axes('Difference', true),
            legend: { show: false },
            cursor: { drag: { x: true, y: false, setScale: true }, sync: { key: cursorKey } },
            hooks: { drawClear: [shadeExcluded(excludedRegions)], setScale: [(u, key) => key === 'x' && syncX(u)] },
          },
          [xs, ds],
          diffEl.current,
        );
      }
      setReady(true);
    }, 0);

    const ro = new ResizeObserver(() => {
      const w = Math.max(200, box.clientWidth);
      main?.setSize({ width: w, height });
      diff?.setSize({ width: w, height: differenceHeight });
    });
    ro.observe(box);

    return () => {
      cancelled = true;
      window.clearTimeout(handle);
      ro.disconnect();
      main?.destroy();
      diff?.destroy();
      setReady(false);
    };
  }, [
    x,
    sample,
    reference,
    referenceX,
    difference,
    excludedRegions,
    bands,
    height,
    differenceHeight,
    sampleLabel,
    referenceLabel,
    yLabel,
    descId,
  ]);

  return (
    <figure className="relative m-0" aria-describedby={descId} role="group" aria-label={label}>
      <p id={descId} className="sr-only">
        {label}. Wavenumber falls from left to right. Drag across the plot to zoom; double-click to show the whole
        range.
      </p>
      <p className="h-4 text-xs text-muted tabular-nums" aria-hidden data-testid="plot-readout">
        {readout &&
          [
            formatWavenumber(readout.x),
            ...readout.values.map((v) => `${v.name} ${v.value == null ? '—' : v.value.toFixed(4)}`),
          ].join(' · ')}
      </p>
      <div ref={wrap} className="relative w-full" style={{ minHeight: height + (difference ? differenceHeight : 0) }}>
        {!ready && (
          <p className="absolute inset-0 flex items-center justify-center text-sm text-muted">Drawing the spectrum…</p>
        )}
        <div ref={mainEl} data-testid="spectrum-main" />
        {difference && <div ref={diffEl} data-testid="spectrum-difference" />}
        {hover && (
          <div
            role="tooltip"
            className="pointer-events-none absolute top-0 z-10 -translate-x-1/2 rounded border border-line bg-white px-2 py-1 text-xs shadow"
            style={{ left: hover.left }}
          >
            <div className="font-medium tabular-nums">{formatWavenumber(hover.band.position)}</div>
            {hover.band.shift !== undefined && (
              <div className="tabular-nums">
                shift {hover.band.shift === null ? 'no matching band' : formatShift(hover.band.shift)}
              </div>
            )}
            {hover.band.label && <div className="text-muted">{hover.band.label}</div>}
          </div>
        )}
      </div>
      <figcaption className="mt-1 flex flex-wrap items-center gap-4 text-xs text-muted" data-testid="plot-key">
        <KeyLine colour={C.petrol}>{sampleLabel}</KeyLine>
        {reference && (
          <KeyLine colour={C.muted} dashed>
            {referenceLabel}
          </KeyLine>
        )}
        {difference && <KeyLine colour={C.amber}>Sample − reference (panel below)</KeyLine>}
        {excludedRegions?.length ? (
          <span className="inline-flex items-center gap-1">
            <span className="inline-block h-2.5 w-4 bg-muted/20" aria-hidden />
            excluded from the comparison
          </span>
        ) : null}
        {bands?.length ? <span>Ticks on top: characteristic bands (hover for position and shift)</span> : null}
      </figcaption>
    </figure>
  );
}
