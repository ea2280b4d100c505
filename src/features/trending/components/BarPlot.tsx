/** A small bar plot on uPlot (the plotting library of the spectrum plot), with the values also in words below. */
import { useEffect, useRef } from 'react';
import uPlot from 'uplot';
import 'uplot/dist/uPlot.min.css';

const FONT = '12px "IBM Plex Sans", "DejaVu Sans", sans-serif';

export function BarPlot({
  labels,
  values,
  yLabel,
  label,
  digits = 0,
  height = 200,
}: {
  labels: string[];
  values: (number | null)[];
  yLabel: string;
  label: string;
  digits?: number;
  height?: number;
}) {
  const box = useRef<HTMLDivElement>(null);
  useEffect(() => {
    const el = box.current;
    if (!el || labels.length === 0) return;
    const bars = uPlot.paths.bars!({ size: [0.6, 60] });
    const plot = new uPlot(
      {
        width: Math.max(240, el.clientWidth),
        height,
        scales: {
          x: { time: false, range: [-0.5, labels.length - 0.5] },
          y: { range: (_u, _min, max) => [0, max > 0 ? max * 1.1 : 1] },
        },
        series: [
          { label: 'Group', value: (_u, v) => (v == null ? '—' : (labels[v] ?? '—')) },
          {
            label: yLabel,
            fill: '#0f5e6e',
            stroke: '#0f5e6e',
            paths: bars,
            points: { show: false },
            value: (_u, v) => (v == null ? '—' : v.toFixed(digits)),
          },
        ],
        axes: [
          {
            font: FONT,
            stroke: '#1f2933',
            splits: () => labels.map((_, i) => i),
            values: (_u, vals) => vals.map((v) => (labels[v] ?? '').slice(0, 24)),
            grid: { show: false },
          },
          { label: yLabel, labelFont: FONT, font: FONT, stroke: '#1f2933', size: 60 },
        ],
        legend: { show: true, live: true },
      },
      [labels.map((_, i) => i), values],
      el,
    );
    const ro = new ResizeObserver(() => plot.setSize({ width: Math.max(240, el.clientWidth), height }));
    ro.observe(el);
    return () => {
      ro.disconnect();
      plot.destroy();
    };
  }, [labels, values, yLabel, digits, height]);
  return (
    <figure className="m-0" role="group" aria-label={label}>
      <div ref={box} className="w-full" />
    </figure>
  );
}
