// The time charts (Injection rate, Budget) on chart.js. Data enter already decimated to about the
// chart's width in pixels (decimate.ts), over the time range shown, so a redraw costs the same for
// 200 or 20,000 samples. A small plugin of ours draws what chart.js has no element for: gap
// shading, the ±1σ band where it is thinner than the line, threshold lines with labels placed off
// the curves, the moments alerts were raised (clustered, labels in lanes), the picked time and the
// range being dragged out.

import {
  Chart, Filler, Legend, LinearScale, LineController, LineElement, PointElement, TimeScale,
  type ChartDataset, type Plugin,
} from 'chart.js';
import 'chartjs-adapter-date-fns';
import { bandFromBreaks, breaksBefore, decimateMinMax, lineFromBreaks, type XY } from './decimate.js';
import type { AlertMoment, ThresholdLine } from './alertMarks.js';
import { flagWords } from './ledgerCells.js';
import { clusterMoments, curveColumns, placeMarkerLabels, placeThresholdLabel, type Box } from './chartLabels.js';
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

/** The datasets of a time chart, by name (their order in chart.data.datasets). */
export const DATASET = { bandUpper: 0, bandLower: 1, total: 2, spin: 3, orbit: 4, background: 5 } as const;
export type DatasetName = keyof typeof DATASET;

type Field = keyof WireSample;

const FIELDS: Record<ChartKind, { total: Field; spin: Field; orbit: Field; background: Field; sigma: Field; unit: string }> = {
  rate: { total: 'rate_total', spin: 'rate_spin', orbit: 'rate_orbit', background: 'rate_background', sigma: 'sigma_rate_total', unit: 'Mx^2/s' },
  budget: { total: 'budget_total', spin: 'budget_spin', orbit: 'budget_orbit', background: 'budget_background', sigma: 'sigma_budget_total', unit: 'Mx^2' },
};

/** Half-width, px, below which the ±1σ band is drawn this wide about the total, so it shows at any zoom. */
export const BAND_MIN_HALF_PX = 4;

export interface ChartDrawn {
  markers: number;
  thresholdLines: number;
  offScale: number;
  /** Boxes (canvas CSS px) of the markers and of every label drawn on the chart. */
  markerBoxes: Box[];
  labelBoxes: Box[];
  /** Threshold labels with no place off the curves: shown in the note under the chart instead. */
  keyedThresholds: string[];
  offScaleThresholds: string[];
  /** Median half-width of the band as drawn, px, and whether it was widened to BAND_MIN_HALF_PX. */
  bandHalfPx: number;
  bandWidened: boolean;
}

export interface ChartMarks {
  gaps: GapSpan[];
  thresholds: ThresholdLine[];
  moments: AlertMoment[];
  cursor?: number;
  hover?: number;
  /** The range being dragged out, ms. */
  selection?: [number, number];
  /** Filled in by each draw: what was drawn (for the note under the chart, the probe and the tests). */
  drawn: ChartDrawn;
  /** Called after each draw. */
  onDrawn?: (drawn: ChartDrawn) => void;
}

const EMPTY_DRAWN: ChartDrawn = {
  markers: 0, thresholdLines: 0, offScale: 0, markerBoxes: [], labelBoxes: [], keyedThresholds: [], offScaleThresholds: [], bandHalfPx: 0, bandWidened: false,
};

const marks = new WeakMap<Chart, ChartMarks>();
/** The last data each chart was given, so a legend toggle can rebuild it. */
const inputs = new WeakMap<Chart, Parameters<typeof setSeriesData>>();

export function chartMarks(chart: Chart): ChartMarks {
  let m = marks.get(chart);
  if (!m) {
    m = { gaps: [], thresholds: [], moments: [], drawn: EMPTY_DRAWN };
    marks.set(chart, m);
  }
  return m;
}

/** The points of one named dataset. */
export function datasetPoints(chart: Chart<'line', XY[]>, name: DatasetName): XY[] {
  return chart.data.datasets[DATASET[name]]?.data ?? [];
}

function unitOf(chart: Chart): string {
  return prettyUnit(String((chart.options.plugins as { helicordUnit?: string } | undefined)?.helicordUnit ?? ''));
}

/** The ±1σ band where it is thinner than BAND_MIN_HALF_PX: widened about the total (drawn before the total line). */
function drawThinBand(chart: Chart<'line', XY[]>, m: ChartMarks): void {
  const { ctx, chartArea: a, scales } = chart;
  const upper = datasetPoints(chart, 'bandUpper');
  const lower = datasetPoints(chart, 'bandLower');
  let widened = false;
  const halves: number[] = [];
  if (!chart.isDatasetVisible(DATASET.bandUpper) || upper.length === 0) {
    m.drawn = { ...m.drawn, bandHalfPx: 0, bandWidened: false };
    return;
  }
  ctx.save();
  ctx.beginPath();
  ctx.rect(a.left, a.top, a.right - a.left, a.bottom - a.top);
  ctx.clip();
  ctx.fillStyle = SERIES_STYLE.band;
  let run: { x: number; lo: number; hi: number }[] = [];
  const flush = (): void => {
    if (run.length === 0) return;
    ctx.beginPath();
    run.forEach((p, i) => (i === 0 ? ctx.moveTo(p.x, p.hi) : ctx.lineTo(p.x, p.hi)));
    for (let i = run.length - 1; i >= 0; i--) ctx.lineTo(run[i].x, run[i].lo);
    ctx.closePath();
    ctx.fill();
    run = [];
  };
  for (let i = 0; i < upper.length; i++) {
    const u = upper[i].y;
    const l = lower[i]?.y;
    if (u === null || l === null || l === undefined) {
      flush();
      continue;
    }
    const x = scales.x.getPixelForValue(upper[i].x);
    const pu = scales.y.getPixelForValue(u);
    const pl = scales.y.getPixelForValue(l);
    const half = Math.abs(pl - pu) / 2;
    halves.push(half);
    if (half >= BAND_MIN_HALF_PX) {
      flush();
      continue;
    }
    widened = true;
    const c = (pu + pl) / 2;
    run.push({ x, lo: c + BAND_MIN_HALF_PX, hi: c - BAND_MIN_HALF_PX });
  }
  flush();
  ctx.restore();
  halves.sort((p, q) => p - q);
  const median = halves.length ? halves[Math.floor(halves.length / 2)] : 0;
  m.drawn = { ...m.drawn, bandHalfPx: Math.max(median, widened ? BAND_MIN_HALF_PX : 0), bandWidened: widened };
}

/** A label on a light plate in its box (the font set by the caller). */
function drawLabel(ctx: CanvasRenderingContext2D, text: string, box: Box): void {
  ctx.fillStyle = 'rgba(255,255,255,0.9)';
  ctx.fillRect(box.x, box.y, box.w, box.h);
  ctx.fillStyle = '#5a2d4a';
  ctx.textAlign = 'left';
  ctx.textBaseline = 'top';
  ctx.fillText(text, box.x + 3, box.y + 1);
}

const marksPlugin: Plugin<'line'> = {
  id: 'helicordMarks',
  beforeDraw(chart) {
    // An opaque background, so an exported PNG is readable on any viewer.
    const { ctx, width, height } = chart;
    ctx.save();
    ctx.fillStyle = '#ffffff';
    ctx.fillRect(0, 0, width, height);
    ctx.restore();
  },
  beforeDatasetsDraw(chart) {
    const m = chartMarks(chart);
    const { ctx, chartArea: a, scales } = chart;
    const x = scales.x;
    ctx.save();
    ctx.fillStyle = SERIES_STYLE.gap;
    for (const g of m.gaps) {
      const x0 = Math.max(a.left, x.getPixelForValue(g.from));
      const x1 = Math.min(a.right, x.getPixelForValue(g.to));
      if (x1 > x0) ctx.fillRect(x0, a.top, Math.max(1, x1 - x0), a.bottom - a.top);
    }
    if (m.selection) {
      const s0 = Math.max(a.left, x.getPixelForValue(Math.min(...m.selection)));
      const s1 = Math.min(a.right, x.getPixelForValue(Math.max(...m.selection)));
      ctx.fillStyle = 'rgba(0, 114, 178, 0.15)';
      ctx.fillRect(s0, a.top, Math.max(1, s1 - s0), a.bottom - a.top);
    }
    ctx.restore();
  },
  beforeDatasetDraw(chart, args) {
    if (args.index === DATASET.total) drawThinBand(chart as Chart<'line', XY[]>, chartMarks(chart));
  },
  afterDatasetsDraw(chart) {
    const m = chartMarks(chart);
    const { ctx, chartArea: a, scales } = chart;
    const x = scales.x;
    const y = scales.y;
    const unit = unitOf(chart);
    const plot = { left: a.left, right: a.right, top: a.top, bottom: a.bottom };
    const markerBoxes: Box[] = [];
    const labelBoxes: Box[] = [];
    const keyed: string[] = [];
    const off: string[] = [];
    let lines = 0;
    ctx.save();
    // Where the drawn curves are, so no label is put on them.
    const curves = (['total', 'spin', 'orbit', 'background'] as const)
      .filter((n) => chart.isDatasetVisible(DATASET[n]))
      .map((n) => datasetPoints(chart as Chart<'line', XY[]>, n).map((p) => ({ x: x.getPixelForValue(p.x), y: p.y === null ? null : y.getPixelForValue(p.y) })));
    const cols = curveColumns(curves, a.left, a.right, 2);
    // Raised moments along the top: nearby ones share a marker; labels in lanes, never overlapping.
    const visible = m.moments.filter((mo) => mo.t >= x.min && mo.t <= x.max);
    const clusters = clusterMoments(visible.map((mo) => ({ px: x.getPixelForValue(mo.t), label: mo.label })), 16);
    for (const c of clusters) markerBoxes.push({ x: c.px - 6, y: a.top, w: 12, h: 10 });
    ctx.font = '10px system-ui, sans-serif';
    const texts = clusters.map((c) => c.labels.join(', '));
    const placed = placeMarkerLabels(texts.map((t, i) => ({ px: clusters[i].px, width: ctx.measureText(t).width + 6 })), 13, a.top, a.left, a.right, 3, markerBoxes, cols);
    clusters.forEach((c, i) => {
      ctx.strokeStyle = SERIES_STYLE.marker;
      ctx.lineWidth = 1.5;
      ctx.setLineDash([3, 3]);
      ctx.beginPath();
      ctx.moveTo(c.px, a.top + 10);
      ctx.lineTo(c.px, a.bottom);
      ctx.stroke();
      ctx.setLineDash([]);
      ctx.fillStyle = SERIES_STYLE.marker;
      ctx.strokeStyle = '#000000';
      ctx.lineWidth = 1;
      ctx.beginPath();
      ctx.moveTo(c.px - 6, a.top);
      ctx.lineTo(c.px + 6, a.top);
      ctx.lineTo(c.px, a.top + 10);
      ctx.closePath();
      ctx.fill();
      ctx.stroke();
      const box = placed[i];
      if (box) {
        drawLabel(ctx, texts[i], box);
        labelBoxes.push(box);
      }
    });
    // Threshold lines at +T and -T (the rules use |value|); labels beside them off the curves,
    // else in the note under the chart; lines off the scale are named there too.
    ctx.font = '11px system-ui, sans-serif';
    for (const t of m.thresholds) {
      let shown = false;
      for (const v of [t.value, -t.value]) {
        if (v < y.min || v > y.max) continue;
        const py = y.getPixelForValue(v);
        ctx.strokeStyle = SERIES_STYLE.threshold;
        ctx.lineWidth = 1.5;
        ctx.setLineDash([10, 4]);
        ctx.beginPath();
        ctx.moveTo(a.left, py);
        ctx.lineTo(a.right, py);
        ctx.stroke();
        ctx.setLineDash([]);
        const value = `${v < 0 ? '−' : ''}${formatSci(t.value)} ${unit}`;
        const full = `${t.label}: ${value}${t.source ? ' · ' + t.source : ''}`;
        // The whole label where it fits off the curves, else shorter ones; what is cut goes to the note.
        let placed = false;
        for (const text of [full, `${t.label}: ${value}`, value]) {
          const box = placeThresholdLabel(py, ctx.measureText(text).width + 6, 14, plot, cols, [...markerBoxes, ...labelBoxes]);
          if (!box) continue;
          drawLabel(ctx, text, box);
          labelBoxes.push(box);
          if (text !== full) keyed.push(full);
          placed = true;
          break;
        }
        if (!placed) keyed.push(full);
        lines++;
        shown = true;
      }
      if (!shown) off.push(`±${formatSci(t.value)} ${unit} (${t.label})`);
    }
    // The picked time (solid) and the hovered time (thin).
    for (const [t, w] of [[m.cursor, 2], [m.hover, 1]] as const) {
      if (t === undefined || t < x.min || t > x.max) continue;
      const px = x.getPixelForValue(t);
      ctx.strokeStyle = w === 2 ? SERIES_STYLE.cursor : 'rgba(0,0,0,0.45)';
      ctx.lineWidth = w;
      ctx.beginPath();
      ctx.moveTo(px, a.top);
      ctx.lineTo(px, a.bottom);
      ctx.stroke();
    }
    ctx.restore();
    m.drawn = {
      ...m.drawn, markers: clusters.length, thresholdLines: lines, offScale: off.length, markerBoxes, labelBoxes, keyedThresholds: keyed, offScaleThresholds: off,
    };
    m.onDrawn?.(m.drawn);
  },
};

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
