// The time charts (Injection rate, Budget) on chart.js. Data enter already decimated to about the
// chart's width in pixels (decimate.ts), over the time range shown, so a redraw costs the same for
// 200 or 20,000 samples. What chart.js has no element for (gaps, the thin band, thresholds,
// raised moments, the picked time) is drawn by the plugin in chartMarks.ts.

import {
  Chart, Filler, Legend, LinearScale, LineController, LineElement, PointElement, TimeScale, type ChartDataset,
} from 'chart.js';
import 'chartjs-adapter-date-fns';
import { bandFromBreaks, breaksBefore, decimateMinMax, lineFromBreaks, type XY } from './decimate.js';
import { DATASET } from './chartDatasets.js';
import { chartMarks, marksPlugin } from './chartMarks.js';
import { flagWords } from './ledgerCells.js';
import { SERIES_STYLE } from './palette.js';
import type { GapSpan, SeriesPoint } from './seriesMerge.js';
import { indexRange } from './timeRange.js';
import { formatSci, formatUtc, prettyUnit } from './unitFormat.js';
import { utcTickLabel, utcTickStep, utcTicks } from './timeTicks.js';
import type { WireSample } from './wire.js';

/** Registers the chart.js parts the charts use (idempotent), when the first chart is made, not on import. */
export function registerChartParts(): void {
  Chart.register(LineController, LineElement, PointElement, LinearScale, TimeScale, Filler, Legend);
}

export type ChartKind = 'rate' | 'budget';


type Field = keyof WireSample;

const FIELDS: Record<ChartKind, { total: Field; spin: Field; orbit: Field; background: Field; sigma: Field; unit: string }> = {
  rate: { total: 'rate_total', spin: 'rate_spin', orbit: 'rate_orbit', background: 'rate_background', sigma: 'sigma_rate_total', unit: 'Mx^2/s' },
  budget: { total: 'budget_total', spin: 'budget_spin', orbit: 'budget_orbit', background: 'budget_background', sigma: 'sigma_budget_total', unit: 'Mx^2' },
};


/** The last data each chart was given, so a legend toggle can rebuild it. */
const inputs = new WeakMap<Chart, Parameters<typeof setSeriesData>>();







type LineChart = Chart<'line', XY[]>;

function lineDataset(label: string, style: { color: string; dash: readonly number[]; width: number }, hidden = false): ChartDataset<'line', XY[]> {
  return {
    label, data: [], borderColor: style.color, backgroundColor: style.color, borderDash: style.dash.slice(),
    borderWidth: style.width, pointRadius: 0, pointHitRadius: 0, spanGaps: false, hidden, tension: 0, fill: false,
  };
}

/** Round UTC ticks of our own on a time axis, about one per 70 px. */
export const UTC_TIME_AXIS = {
  type: 'time' as const,
  afterBuildTicks(scale: { min: number; max: number; width: number; ticks: { value: number }[] }) {
    scale.ticks = utcTicks(scale.min, scale.max, Math.max(2, Math.floor(scale.width / 70))).map((value) => ({ value }));
  },
  ticks: {
    maxRotation: 0,
    autoSkip: false,
    callback(this: { chart: Chart }, value: string | number) {
      const s = this.chart.scales.x;
      return utcTickLabel(Number(value), utcTickStep(s.min, s.max, Math.max(2, Math.floor(s.width / 70))));
    },
  },
  title: { display: true, text: 'time (UTC)' },
};

/** Builds one of the two charts on a canvas. */
export function createSeriesChart(canvas: HTMLCanvasElement, kind: ChartKind): LineChart {
  registerChartParts();
  const f = FIELDS[kind];
  const unit = prettyUnit(f.unit);
  const datasets: ChartDataset<'line', XY[]>[] = [];
  datasets[DATASET.bandUpper] = { ...lineDataset('total ±1σ', { color: SERIES_STYLE.band, dash: [], width: 0 }), backgroundColor: SERIES_STYLE.band, fill: '+1' };
  datasets[DATASET.bandLower] = { ...lineDataset('band lower', { color: SERIES_STYLE.band, dash: [], width: 0 }), backgroundColor: SERIES_STYLE.band };
  datasets[DATASET.total] = lineDataset('total', SERIES_STYLE.total);
  datasets[DATASET.spin] = lineDataset('spin', SERIES_STYLE.spin);
  datasets[DATASET.orbit] = lineDataset('orbit', SERIES_STYLE.orbit);
  datasets[DATASET.background] = lineDataset('background', SERIES_STYLE.background, true);
  const chart = new Chart<'line', XY[]>(canvas, {
    type: 'line',
    data: { datasets },
    options: {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      parsing: false,
      normalized: true,
      // Only clicks reach chart.js (the legend toggles lines); hover, picking and dragging are ours.
      events: ['click'],
      scales: {
        x: UTC_TIME_AXIS as never,
        y: {
          // Headroom above the data for the alert markers along the top.
          grace: '18%',
          ticks: { callback: (v) => formatSci(Number(v), 2) },
          title: { display: true, text: kind === 'rate' ? `dH/dt (${unit})` : `H (${unit})` },
        },
      },
      plugins: {
        legend: {
          position: 'top',
          align: 'end',
          labels: { boxWidth: 24, boxHeight: 2, filter: (item: { text: string }) => item.text !== 'band lower' },
          onClick(_e: unknown, item: { datasetIndex?: number }, legend: { chart: Chart }) {
            const ci = legend.chart;
            const i = item.datasetIndex ?? 0;
            ci.setDatasetVisibility(i, !ci.isDatasetVisible(i));
            // The band is two datasets.
            if (i === DATASET.bandUpper) ci.setDatasetVisibility(DATASET.bandLower, ci.isDatasetVisible(DATASET.bandUpper));
            const input = inputs.get(ci);
            if (input) setSeriesData(...input);
            else ci.update('none');
          },
        },
        tooltip: { enabled: false },
        helicordUnit: f.unit,
      } as never,
    },
    plugins: [marksPlugin],
  });
  chartMarks(chart);
  return chart;
}

/** What a chart is given besides the samples. */
export interface SeriesView {
  gaps: readonly GapSpan[];
  /** About the chart's width in px: the decimation's bucket count. */
  buckets: number;
  /** Time range shown, ms; undefined: the whole series. */
  range?: [number, number];
  /** Steps longer than this (ms) break the lines even without a reported gap (the server's gap rule). */
  breakStepMs: number;
}

/** The six datasets of a chart (in DATASET order), decimated over the range shown. */
export function buildSeriesData(kind: ChartKind, series: readonly SeriesPoint[], view: SeriesView, withBackground: boolean): XY[][] {
  const f = FIELDS[kind];
  let lo = 0;
  let hi = series.length;
  if (view.range) {
    const all = new Float64Array(series.length);
    for (let i = 0; i < series.length; i++) all[i] = series[i].t;
    const [a, b] = indexRange(all, view.range[0], view.range[1]);
    // One sample either side, so lines run to the edges of the range.
    lo = Math.max(0, a - 1);
    hi = Math.min(series.length, b + 1);
  }
  const n = hi - lo;
  const times = new Float64Array(n);
  for (let i = 0; i < n; i++) times[i] = series[lo + i].t;
  const pick = (field: Field): (number | null)[] => {
    const out = new Array<number | null>(n);
    for (let i = 0; i < n; i++) out[i] = series[lo + i].s[field] as number | null;
    return out;
  };
  const flags = breaksBefore(times, view.gaps, view.breakStepMs);
  const totals = pick(f.total);
  const line = (values: (number | null)[]): XY[] => decimateMinMax(lineFromBreaks(times, values, flags), view.buckets);
  const band = bandFromBreaks(times, totals, pick(f.sigma), flags, view.buckets);
  const out: XY[][] = [];
  out[DATASET.bandUpper] = band.map((p) => ({ x: p.x, y: p.hi }));
  out[DATASET.bandLower] = band.map((p) => ({ x: p.x, y: p.lo }));
  out[DATASET.total] = line(totals);
  out[DATASET.spin] = line(pick(f.spin));
  out[DATASET.orbit] = line(pick(f.orbit));
  // A hidden line is not decimated at all; the legend toggle rebuilds the data.
  out[DATASET.background] = withBackground ? line(pick(f.background)) : [];
  return out;
}

/** Puts built datasets and the time range into the chart and redraws it. */
export function applySeriesData(chart: LineChart, data: XY[][], xRange: [number, number] | undefined): void {
  const ds = chart.data.datasets;
  for (let i = 0; i < ds.length; i++) ds[i].data = data[i] ?? [];
  const x = chart.options.scales?.x;
  if (x) {
    x.min = xRange?.[0];
    x.max = xRange?.[1];
  }
  chart.update('none');
}

/** Replaces the chart's data from the series over the view's range (default: all of it). */
export function setSeriesData(chart: LineChart, kind: ChartKind, series: readonly SeriesPoint[], view: SeriesView): void {
  inputs.set(chart, [chart, kind, series, view]);
  const n = series.length;
  const range = view.range ?? (n > 0 ? ([series[0].t, series[n - 1].t] as [number, number]) : undefined);
  applySeriesData(chart, buildSeriesData(kind, series, view, chart.isDatasetVisible(DATASET.background)), range);
}

/** Time (ms) under a canvas x position inside the plot area; undefined outside it. */
export function timeAtPixel(chart: Chart, offsetX: number, offsetY: number): number | undefined {
  const a = chart.chartArea;
  if (!a || offsetX < a.left || offsetX > a.right || offsetY < a.top || offsetY > a.bottom) return undefined;
  return chart.scales.x.getValueForPixel(offsetX);
}

/** The lines of the hover readout for one sample, with units. */
export function readoutLines(kind: ChartKind, s: WireSample, t: number): string[] {
  const f = FIELDS[kind];
  const u = f.unit;
  const v = (field: Field): number | null => s[field] as number | null;
  const total = v(f.total);
  const sigma = v(f.sigma);
  const withU = (x: number | null): string => {
    const text = formatSci(x, 3);
    return text === '—' ? text : `${text} ${prettyUnit(u)}`;
  };
  return [
    formatUtc(t),
    `total ${withU(total)}${sigma !== null && Number.isFinite(sigma) ? ` ± ${formatSci(sigma, 2)}` : ''}`,
    `spin ${withU(v(f.spin))}`,
    `orbit ${withU(v(f.orbit))}`,
    `background ${withU(v(f.background))}`,
    ...(s.flags && s.flags.length > 0 ? [`notes: ${flagWords(s.flags).join('; ')}`] : []),
  ];
}
