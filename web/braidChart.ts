// The braid beside the rate chart (docs/braids.md): the sliding window's entropy rate per frame,
// the whole run's rate as a horizontal reference line, dotted vertical lines where a braid segment
// began (the footpoint set changed), on the rate chart's time axis and range. Entropy rates are
// per hour. "lower bound" where the entropy is not exact (more than 3 strands: the Burau bound).

import type { Chart, Plugin } from 'chart.js';
import type { SeriesView } from './charts.js';
import { createCompactChart, setCompactLines, viewLine } from './compactChart.js';
import type { XY } from './decimate.js';
import { OKABE_ITO } from './palette.js';
import { braidExactness } from './braidWords.js';
import { formatSci } from './unitFormat.js';
import type { BraidAnswer } from './wire.js';

export const BRAID_LINE = { window: 0, run: 1, segment: 2 } as const;

/** What the chart drew, for the probe: segment starts inside the range. */
const drawnSegments = new WeakMap<Chart, number>();
const segmentTimes = new WeakMap<Chart, readonly number[]>();

const segmentMarks: Plugin<'line'> = {
  id: 'helicordBraidSegments',
  afterDatasetsDraw(chart) {
    const x = chart.scales.x;
    const area = chart.chartArea;
    let n = 0;
    const ctx = chart.ctx;
    ctx.save();
    ctx.strokeStyle = OKABE_ITO.reddishPurple;
    ctx.setLineDash([2, 3]);
    ctx.lineWidth = 1.5;
    for (const t of segmentTimes.get(chart) ?? []) {
      const px = x.getPixelForValue(t);
      if (!(px >= area.left && px <= area.right)) continue;
      ctx.beginPath();
      ctx.moveTo(px, area.top);
      ctx.lineTo(px, area.bottom);
      ctx.stroke();
      n++;
    }
    ctx.restore();
    drawnSegments.set(chart, n);
  },
};

const rateTick = (v: number): string => formatSci(v, 2);

export function createBraidChart(canvas: HTMLCanvasElement, alignWith?: () => Chart | undefined): Chart<'line', XY[]> {
  const lines = [];
  lines[BRAID_LINE.window] = { label: 'window', color: OKABE_ITO.black, dash: [], width: 1.6, pointRadius: 2 };
  lines[BRAID_LINE.run] = { label: 'whole run', color: OKABE_ITO.blue, dash: [6, 3], width: 1.4 };
  // No data: its legend entry names the dotted segment lines the plugin draws.
  lines[BRAID_LINE.segment] = { label: 'segment start', color: OKABE_ITO.reddishPurple, dash: [2, 3], width: 1.5 };
  return createCompactChart(canvas, lines, 'entropy (h⁻¹)', { yTick: rateTick, beginAtZero: true, plugins: [segmentMarks], alignWith });
}

/** The chart's lines over the view: window rate per frame, the run's rate across the range. */
export function braidLines(answer: BraidAnswer, view: SeriesView): { lines: XY[][]; range: [number, number] | undefined; segments: number[] } {
  const times = answer.series.map((r) => Date.parse(r.time));
  const range = view.range ?? (times.length > 0 ? ([times[0], times[times.length - 1]] as [number, number]) : undefined);
  const lines: XY[][] = [];
  lines[BRAID_LINE.window] = viewLine(times, answer.series.map((r) => r.braid_entropy_rate), view);
  const run = answer.last?.run.ratePerHour;
  lines[BRAID_LINE.run] = run != null && Number.isFinite(run) && range ? [{ x: range[0], y: run }, { x: range[1], y: run }] : [];
  lines[BRAID_LINE.segment] = [];
  return { lines, range, segments: answer.segments.map((g) => Date.parse(g.time)) };
}

export function setBraidData(chart: Chart<'line', XY[]>, answer: BraidAnswer, view: SeriesView): void {
  const { lines, range, segments } = braidLines(answer, view);
  const exact = braidExactness(answer);
  chart.data.datasets[BRAID_LINE.window].label = exact.window ? 'window' : 'window (lower bound)';
  chart.data.datasets[BRAID_LINE.run].label = exact.run ? 'whole run' : 'whole run (lower bound)';
  segmentTimes.set(chart, segments);
  setCompactLines(chart, lines, range);
}

export function braidSegmentsDrawn(chart: Chart): number {
  return drawnSegments.get(chart) ?? 0;
}
