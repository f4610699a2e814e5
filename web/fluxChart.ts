// The Flux panel: the unsigned flux Phi(t) (Mx, left axis) beside the budget normalised by its
// square, H / Phi^2 (dimensionless, right axis), over the same time range as the other charts.

import { Chart, type ChartDataset } from 'chart.js';
import { registerChartParts, UTC_TIME_AXIS } from './charts.js';
import { whiteBackground } from './compactChart.js';
import { breaksBefore, decimateMinMax, lineFromBreaks, type XY } from './decimate.js';
import { OKABE_ITO } from './palette.js';
import type { SeriesView } from './charts.js';
import type { SeriesPoint } from './seriesMerge.js';
import { indexRange } from './timeRange.js';
import { formatSci } from './unitFormat.js';

export const FLUX_DATASET = { flux: 0, normalised: 1 } as const;

export function createFluxChart(canvas: HTMLCanvasElement): Chart<'line', XY[]> {
  registerChartParts();
  const line = (label: string, color: string, dash: number[], axis: string): ChartDataset<'line', XY[]> => ({
    label, data: [], borderColor: color, backgroundColor: color, borderDash: dash, borderWidth: 1.8, pointRadius: 0, pointHitRadius: 0,
    spanGaps: false, tension: 0, fill: false, yAxisID: axis,
  });
  const datasets: ChartDataset<'line', XY[]>[] = [];
  datasets[FLUX_DATASET.flux] = line('unsigned flux Φ', OKABE_ITO.black, [], 'y');
  datasets[FLUX_DATASET.normalised] = line('H/Φ²', OKABE_ITO.blue, [6, 3], 'y2');
  return new Chart<'line', XY[]>(canvas, {
    type: 'line',
    data: { datasets },
    options: {
      animation: false, responsive: true, maintainAspectRatio: false, parsing: false, normalized: true, events: ['click'],
      scales: {
        x: UTC_TIME_AXIS as never,
        y: { position: 'left', ticks: { callback: (v) => formatSci(Number(v), 2) }, title: { display: true, text: 'Φ (Mx)' } },
        y2: { position: 'right', grid: { drawOnChartArea: false }, ticks: { callback: (v) => formatSci(Number(v), 2) }, title: { display: true, text: 'H/Φ²' } },
      },
      plugins: { legend: { position: 'top', align: 'end', labels: { boxWidth: 24, boxHeight: 2 } }, tooltip: { enabled: false } },
    },
    plugins: [whiteBackground],
  });
}

/** Samples in the view that carry a flux; puts both lines into the chart. Answers that count. */
export function setFluxData(chart: Chart<'line', XY[]>, series: readonly SeriesPoint[], view: SeriesView): number {
  const all = new Float64Array(series.length);
  for (let i = 0; i < series.length; i++) all[i] = series[i].t;
  const [a, b] = view.range ? indexRange(all, view.range[0], view.range[1]) : [0, series.length];
  const lo = Math.max(0, a - 1);
  const hi = Math.min(series.length, b + 1);
  const times = all.subarray(lo, hi);
  const flux: (number | null)[] = [];
  const norm: (number | null)[] = [];
  let carried = 0;
  for (let i = lo; i < hi; i++) {
    const s = series[i].s;
    const f = typeof s.flux_unsigned === 'number' && Number.isFinite(s.flux_unsigned) ? s.flux_unsigned : null;
    if (f !== null && i >= a && i < b) carried++;
    flux.push(f);
    norm.push(typeof s.budget_normalised === 'number' && Number.isFinite(s.budget_normalised) ? s.budget_normalised : null);
  }
  const flags = breaksBefore(times, view.gaps, view.breakStepMs);
  chart.data.datasets[FLUX_DATASET.flux].data = decimateMinMax(lineFromBreaks(times, flux, flags), view.buckets);
  chart.data.datasets[FLUX_DATASET.normalised].data = decimateMinMax(lineFromBreaks(times, norm, flags), view.buckets);
  const x = chart.options.scales?.x;
  const range = view.range ?? (series.length > 0 ? [series[0].t, series[series.length - 1].t] : undefined);
  if (x) {
    x.min = range?.[0];
    x.max = range?.[1];
  }
  chart.update('none');
  return carried;
}
