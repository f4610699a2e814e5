// A compact time chart beside the rate chart (the braid's entropy rate, the rotation share): chart.js
// on the same UTC axis and over the same range as the other charts, lines named, broken at gaps
// and decimated to the chart's width like theirs, on a white background (so its PNG reads).

import { Chart, type ChartDataset, type Plugin } from 'chart.js';
import { registerChartParts, UTC_TIME_AXIS, type SeriesView } from './charts.js';
import { breaksBefore, decimateMinMax, lineFromBreaks, type XY } from './decimate.js';
import { indexRange } from './timeRange.js';

export interface CompactLineStyle {
  readonly label: string;
  readonly color: string;
  readonly dash: readonly number[];
  readonly width: number;
  /** Dots on the samples (a sparse series, one value per frame). */
  readonly pointRadius?: number;
}

/** Paints the canvas white first, so an exported PNG is not transparent. */
export const whiteBackground: Plugin<'line'> = {
  id: 'helicordWhite',
  beforeDraw(chart) {
    chart.ctx.save();
    chart.ctx.fillStyle = '#ffffff';
    chart.ctx.fillRect(0, 0, chart.width, chart.height);
    chart.ctx.restore();
  },
};

export function createCompactChart(
  canvas: HTMLCanvasElement,
  lines: readonly CompactLineStyle[],
  yTitle: string,
  options: {
    yTick: (v: number) => string;
    beginAtZero?: boolean;
    plugins?: Plugin<'line'>[];
    /** The chart above (the rate chart): this plot takes its left and right edges, so a time is one column on both. */
    alignWith?: () => Chart | undefined;
  },
): Chart<'line', XY[]> {
  registerChartParts();
  const datasets: ChartDataset<'line', XY[]>[] = lines.map((l) => ({
    label: l.label, data: [], borderColor: l.color, backgroundColor: l.color, borderDash: l.dash.slice(), borderWidth: l.width,
    pointRadius: l.pointRadius ?? 0, pointHitRadius: 0, spanGaps: false, tension: 0, fill: false,
  }));
  const chart = new Chart<'line', XY[]>(canvas, {
    type: 'line',
    data: { datasets },
    options: {
      animation: false, responsive: true, maintainAspectRatio: false, parsing: false, normalized: true, events: ['click'],
      // No room added for the dots at the edges: the plot keeps the rate chart's edges.
      layout: { autoPadding: false },
      scales: {
        // The rate chart's axis above says what it is: no title, more room for the plot.
        x: { ...UTC_TIME_AXIS, title: { display: false } } as never,
        y: {
          beginAtZero: options.beginAtZero ?? false, ticks: { callback: (v) => options.yTick(Number(v)) }, title: { display: true, text: yTitle },
          afterFit(scale: { width: number }) {
            const w = options.alignWith?.()?.scales.y?.width;
            if (w !== undefined && w > 0) scale.width = w;
          },
        },
      },
      plugins: { legend: { position: 'top', align: 'end', labels: { boxWidth: 24, boxHeight: 2 } }, tooltip: { enabled: false } },
    },
    plugins: [whiteBackground, ...(options.plugins ?? [])],
  });
  if (options.alignWith) alignTargets.set(chart, options.alignWith);
  return chart;
}

const alignTargets = new WeakMap<Chart, () => Chart | undefined>();

/** Pads the right side so the plot ends where the target's does (its last time label may need more room). */
function alignRight(chart: Chart<'line', XY[]>): void {
  const target = alignTargets.get(chart)?.();
  if (!target?.chartArea || !chart.chartArea) return;
  const padding = chart.options.layout?.padding;
  const pad = typeof padding === 'object' && padding !== null && 'right' in padding ? Number(padding.right) || 0 : 0;
  const next = Math.max(0, pad + (target.width - target.chartArea.right) - (chart.width - chart.chartArea.right));
  if (Math.abs(next - pad) < 0.5) return;
  chart.options.layout = { autoPadding: false, padding: { right: next } };
  chart.update('none');
}

/**
 * Values at times (ms, ascending) as a line over the view: one point either side of the range so
 * the line reaches the edges, broken at gaps and steps over the gap rule and at null values,
 * decimated to the view's buckets.
 */
export function viewLine(times: ArrayLike<number>, values: ArrayLike<number | null>, view: SeriesView): XY[] {
  const [a, b] = view.range ? indexRange(times, view.range[0], view.range[1]) : [0, times.length];
  const lo = Math.max(0, a - 1);
  const hi = Math.min(times.length, b + 1);
  const t = Array.from({ length: hi - lo }, (_, i) => times[lo + i]);
  const v = Array.from({ length: hi - lo }, (_, i) => values[lo + i]);
  return decimateMinMax(lineFromBreaks(t, v, breaksBefore(t, view.gaps, view.breakStepMs)), view.buckets);
}

/** Puts the lines (in the order the chart was made with) and the time range in, and redraws. */
export function setCompactLines(chart: Chart<'line', XY[]>, lines: readonly XY[][], range: [number, number] | undefined): void {
  chart.data.datasets.forEach((d, i) => {
    d.data = lines[i] ?? [];
  });
  const x = chart.options.scales?.x;
  if (x) {
    x.min = range?.[0];
    x.max = range?.[1];
  }
  chart.update('none');
  alignRight(chart);
}
