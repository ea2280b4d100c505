/**
 * Individuals chart with its moving-range chart below (uPlot, the plotting library of the
 * spectrum plot): points in measurement order, centre line, 3-sigma control limits, and every
 * point that completes a run-rule pattern marked with an open diamond (shape, not colour alone;
 * the list under the chart names the rule). Drag across either chart to zoom both; double-click
 * to show every point. Built after the page has painted.
 */
import { useEffect, useId, useRef, useState } from 'react';
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';
import { formatDateTime } from '../../../lib/format';
import { METRIC_LABELS, type ChartResponse } from '../api';

const C = { petrol: '#0f5e6e', ink: '#1f2933', line: '#d9dcd3', fail: '#b3261e', muted: '#5f6673', amber: '#8b5d14' };
const FONT = '12px "IBM Plex Sans", "DejaVu Sans", sans-serif';

function axes(yLabel: string, digits: number): uPlot.Axis[] {
  const grid = { stroke: C.line, width: 1 };
  return [
    { label: 'Point, in order of measurement', labelFont: FONT, font: FONT, stroke: C.ink, grid, size: 40 },
    {
      label: yLabel,
      labelFont: FONT,
      font: FONT,
      stroke: C.ink,
      grid,
      size: 70,
      values: (_u, vals) => vals.map((v) => v.toFixed(digits)),
    },
  ];
}

function markPoints(indices: Set<number>, seriesIdx: number) {
  return (u: uPlot) => {
    if (!indices.size) return;
    const { ctx } = u;
    const px = devicePixelRatio || 1;
    const ys = u.data[seriesIdx];
    ctx.save();
    ctx.strokeStyle = C.fail;
    ctx.lineWidth = 2 * px;
    for (const i of indices) {
      const v = ys[i];
      if (v == null) continue;
      const x = u.valToPos(u.data[0][i], 'x', true);
      const y = u.valToPos(v, 'y', true);
      const r = 7 * px;
      ctx.beginPath();
      ctx.moveTo(x, y - r);
      ctx.lineTo(x + r, y);
      ctx.lineTo(x, y + r);
      ctx.lineTo(x - r, y);
      ctx.closePath();
      ctx.stroke();
    }
    ctx.restore();
  };
}

export function ControlChart({ chart, height = 300 }: { chart: ChartResponse; height?: number }) {
  const wrap = useRef<HTMLDivElement>(null);
  const iEl = useRef<HTMLDivElement>(null);
  const mrEl = useRef<HTMLDivElement>(null);
  const [ready, setReady] = useState(false);
  const descId = useId();
  const m = METRIC_LABELS[chart.metric];
  const unit = m.unit ? ` (${m.unit})` : '';

  useEffect(() => {
    const box = wrap.current;
    if (!box || !iEl.current || !mrEl.current) return;
    let iPlot: uPlot | null = null;
    let mrPlot: uPlot | null = null;
    let syncing = false;
    let cancelled = false;
    const handle = window.setTimeout(() => {
      if (cancelled) return;
      const width = Math.max(240, box.clientWidth);
      const xs = chart.points.map((_, i) => i + 1);
      const l = chart.limits;
      const flat = (v: number | undefined) => xs.map(() => (v === undefined ? null : v));
      const index = new Map(chart.points.map((p, i) => [p.measurementId, i]));
      const marked = new Set(
        chart.hits.map((h) => index.get(h.measurementId)).filter((i): i is number => i !== undefined),
      );
      const point = (i: number | null | undefined) => (i == null ? null : chart.points[i - 1]);
      const sync = (from: uPlot) => {
        const other = from === iPlot ? mrPlot : iPlot;
        if (!other || syncing) return;
        syncing = true;
        other.setScale('x', { min: from.scales.x.min!, max: from.scales.x.max! });
        syncing = false;
      };
      const key = `trend-${descId}`;
      iPlot = new uPlot(
        {
          width,
          height,
          scales: { x: { time: false } },
          series: [
            {
              label: 'Point',
              value: (_u, v) => {
                const p = point(v);
                return p ? `${v}: ${p.container}, ${formatDateTime(p.at)}` : '—';
              },
            },
            {
              label: m.title,
              stroke: C.petrol,
              width: 1.5,
              points: { show: true, size: 5, fill: C.petrol },
              value: (_u, v) => (v == null ? '—' : v.toFixed(m.digits)),
            },
            { label: 'Centre line', stroke: C.ink, width: 1, dash: [2, 3] },
            { label: 'Upper control limit', stroke: C.fail, width: 1, dash: [8, 4] },
            { label: 'Lower control limit', stroke: C.fail, width: 1, dash: [8, 4] },
          ],
          axes: axes(m.title + unit, m.digits),
          legend: { show: true, live: true },
          cursor: { drag: { x: true, y: false, setScale: true }, sync: { key } },
          hooks: { draw: [markPoints(marked, 1)], setScale: [(u, k) => k === 'x' && sync(u)] },
        },
        [xs, chart.points.map((p) => p.value), flat(l?.centre), flat(l?.ucl), flat(l?.lcl)],
        iEl.current!,
      );
      mrPlot = new uPlot(
        {
          width,
          height: Math.round(height * 0.5),
          scales: { x: { time: false } },
          series: [
            { label: 'Point' },
            {
              label: 'Moving range',
              stroke: C.amber,
              width: 1.2,
              points: { show: true, size: 4, fill: C.amber },
              value: (_u, v) => (v == null ? '—' : v.toFixed(m.digits)),
            },
            { label: 'Mean moving range', stroke: C.ink, width: 1, dash: [2, 3] },
            { label: 'Upper limit', stroke: C.fail, width: 1, dash: [8, 4] },
          ],
          axes: axes('Moving range' + unit, m.digits),
          legend: { show: true, live: true },
          cursor: { drag: { x: true, y: false, setScale: true }, sync: { key } },
          hooks: { setScale: [(u, k) => k === 'x' && sync(u)] },
        },
        [xs, chart.points.map((p) => p.mr), flat(l?.mrBar), flat(l?.mrUcl)],
        mrEl.current!,
      );
      setReady(true);
    }, 0);
    const ro = new ResizeObserver(() => {
      const w = Math.max(240, box.clientWidth);
      iPlot?.setSize({ width: w, height });
      mrPlot?.setSize({ width: w, height: Math.round(height * 0.5) });
    });
    ro.observe(box);
    return () => {
      cancelled = true;
      window.clearTimeout(handle);
      ro.disconnect();
      iPlot?.destroy();
      mrPlot?.destroy();
      setReady(false);
    };
  }, [chart, height, descId, m, unit]);

  return (
    <figure
      className="relative m-0"
      role="group"
      aria-label={`Control chart of ${m.title}, ${chart.scopeLabel}`}
      aria-describedby={descId}
    >
      <p id={descId} className="sr-only">
        Individuals chart with {chart.points.length} points and its moving-range chart. Drag across a chart to zoom;
        double-click to show every point. Points that complete a run-rule pattern are marked with a diamond and listed
        below the chart.
      </p>
      <div ref={wrap} className="relative w-full" style={{ minHeight: height * 1.5 }} data-testid="control-chart">
        {!ready && (
          <p className="absolute inset-0 flex items-center justify-center text-sm text-muted">Drawing the chart…</p>
        )}
        <div ref={iEl} />
        <div ref={mrEl} />
      </div>
      <figcaption className="mt-1 flex flex-wrap gap-4 text-xs text-muted">
        <span>
          <span aria-hidden className="font-bold text-fail">
            ◇
          </span>{' '}
          point that completes a run-rule pattern
        </span>
        <span>Dashed: control limits (3 sigma); dotted: centre line</span>
      </figcaption>
    </figure>
  );
}
