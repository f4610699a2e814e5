// The two time charts (Injection rate, Budget) on chart.js. Data enter already decimated to about
// the chart's width in pixels (decimate.ts), so a redraw costs the same for 200 or 20,000 samples.
// A small plugin of ours draws what chart.js has no element for: gap shading, threshold lines, the
// moments alerts were raised, the picked time.

import {
  Chart, Filler, Legend, LinearScale, LineController, LineElement, PointElement, TimeScale,
  type ChartDataset, type Plugin,
} from 'chart.js';
import 'chartjs-adapter-date-fns';
import { bandFromBreaks, breaksBefore, decimateMinMax, lineFromBreaks, type XY } from './decimate.js';
import type { AlertMoment, ThresholdLine } from './alertMarks.js';
import { SERIES_STYLE } from './palette.js';
import { medianStepMs, type GapSpan, type SeriesPoint } from './seriesMerge.js';
import { formatSci, formatUtc, prettyUnit } from './unitFormat.js';
import { utcTickLabel, utcTickStep, utcTicks } from './timeTicks.js';
import type { WireSample } from './wire.js';

Chart.register(LineController, LineElement, PointElement, LinearScale, TimeScale, Filler, Legend);

export type ChartKind = 'rate' | 'budget';

type Field = keyof WireSample;

const FIELDS: Record<ChartKind, { total: Field; spin: Field; orbit: Field; background: Field; sigma: Field; unit: string }> = {
  rate: { total: 'rate_total', spin: 'rate_spin', orbit: 'rate_orbit', background: 'rate_background', sigma: 'sigma_rate_total', unit: 'Mx^2/s' },
  budget: { total: 'budget_total', spin: 'budget_spin', orbit: 'budget_orbit', background: 'budget_background', sigma: 'sigma_budget_total', unit: 'Mx^2' },
};

export interface ChartMarks {
  gaps: GapSpan[];
  thresholds: ThresholdLine[];
  moments: AlertMoment[];
  cursor?: number;
  hover?: number;
  /** Filled in by each draw: what was drawn (for the page's probe and the tests). */
  drawn: { markers: number; thresholdLines: number; offScale: number };
}

const marks = new WeakMap<Chart, ChartMarks>();
/** The last data each chart was given, so a legend toggle can rebuild it. */
const inputs = new WeakMap<Chart, Parameters<typeof setSeriesData>>();

export function chartMarks(chart: Chart): ChartMarks {
  let m = marks.get(chart);
  if (!m) {
    m = { gaps: [], thresholds: [], moments: [], drawn: { markers: 0, thresholdLines: 0, offScale: 0 } };
    marks.set(chart, m);
  }
  return m;
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
    ctx.restore();
  },
  afterDatasetsDraw(chart) {
    const m = chartMarks(chart);
    const { ctx, chartArea: a, scales } = chart;
    const x = scales.x;
    const y = scales.y;
    const unit = prettyUnit(String((chart.options.plugins as { helicordUnit?: string } | undefined)?.helicordUnit ?? ''));
    let lines = 0;
    let off = 0;
    let markers = 0;
    ctx.save();
    ctx.font = '11px system-ui, sans-serif';
    // Threshold lines at +T and -T (the rules use |value|); ones off the scale become a note.
    const offNotes: string[] = [];
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
        const text = `${t.label}: ${v < 0 ? '−' : ''}${formatSci(t.value)} ${unit}${t.source ? ' · ' + t.source : ''}`;
        const tw = ctx.measureText(text).width;
        // Above the line where it fits, below it at the top edge.
        const ty = py - 15 >= a.top ? py - 15 : py + 2;
        ctx.fillStyle = 'rgba(255,255,255,0.85)';
        ctx.fillRect(a.right - 6 - tw, ty, tw + 4, 13);
        ctx.fillStyle = '#5a2d4a';
        ctx.textAlign = 'right';
        ctx.textBaseline = 'top';
        ctx.fillText(text, a.right - 4, ty + 1);
        lines++;
        shown = true;
      }
      if (!shown) {
        off++;
        offNotes.push(`${formatSci(t.value)} ${unit}`);
      }
    }
    if (offNotes.length > 0) {
      ctx.fillStyle = '#5a2d4a';
      // Bottom left, away from the raised markers along the top.
      const note = `thresholds beyond the scale: ±${offNotes.join(', ±')}`;
      ctx.fillStyle = 'rgba(255,255,255,0.85)';
      ctx.fillRect(a.left + 2, a.bottom - 16, ctx.measureText(note).width + 4, 14);
      ctx.fillStyle = '#5a2d4a';
      ctx.textAlign = 'left';
      ctx.textBaseline = 'bottom';
      ctx.fillText(note, a.left + 4, a.bottom - 3);
    }
    // Raised moments: a dashed vertical line and a numbered triangle at the top.
    for (const mo of m.moments) {
      if (mo.t < x.min || mo.t > x.max) continue;
      const px = x.getPixelForValue(mo.t);
      ctx.strokeStyle = SERIES_STYLE.marker;
      ctx.lineWidth = 1.5;
      ctx.setLineDash([3, 3]);
      ctx.beginPath();
      ctx.moveTo(px, a.top + 10);
      ctx.lineTo(px, a.bottom);
      ctx.stroke();
      ctx.setLineDash([]);
      ctx.fillStyle = SERIES_STYLE.marker;
      ctx.strokeStyle = '#000000';
      ctx.lineWidth = 1;
      ctx.beginPath();
      ctx.moveTo(px - 6, a.top);
      ctx.lineTo(px + 6, a.top);
      ctx.lineTo(px, a.top + 10);
      ctx.closePath();
      ctx.fill();
      ctx.stroke();
      ctx.fillStyle = '#5a2d4a';
      ctx.textAlign = px > a.right - 80 ? 'right' : 'left';
      ctx.textBaseline = 'top';
      ctx.font = '10px system-ui, sans-serif';
      ctx.fillText(mo.rule, px + (px > a.right - 80 ? -8 : 8), a.top);
      ctx.font = '11px system-ui, sans-serif';
      markers++;
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
    m.drawn = { markers, thresholdLines: lines, offScale: off };
  },
};

type LineChart = Chart<'line', XY[]>;

function lineDataset(label: string, style: { color: string; dash: readonly number[]; width: number }, hidden = false): ChartDataset<'line', XY[]> {
  return {
    label, data: [], borderColor: style.color, backgroundColor: style.color, borderDash: style.dash.slice(),
    borderWidth: style.width, pointRadius: 0, pointHitRadius: 0, spanGaps: false, hidden, tension: 0, fill: false,
  };
}

/** Builds one of the two charts on a canvas. */
export function createSeriesChart(canvas: HTMLCanvasElement, kind: ChartKind): LineChart {
  const f = FIELDS[kind];
  const unit = prettyUnit(f.unit);
  const chart = new Chart<'line', XY[]>(canvas, {
    type: 'line',
    data: {
      datasets: [
        { ...lineDataset('total ±1σ', { color: SERIES_STYLE.band, dash: [], width: 0 }), backgroundColor: SERIES_STYLE.band, fill: '+1' },
        { ...lineDataset('band lower', { color: SERIES_STYLE.band, dash: [], width: 0 }), backgroundColor: SERIES_STYLE.band },
        lineDataset('total', SERIES_STYLE.total),
        lineDataset('spin', SERIES_STYLE.spin),
        lineDataset('orbit', SERIES_STYLE.orbit),
        lineDataset('background', SERIES_STYLE.background, true),
      ],
    },
    options: {
      animation: false,
      responsive: true,
      maintainAspectRatio: false,
      parsing: false,
      normalized: true,
      // Only clicks reach chart.js (the legend toggles lines); hover and picking are ours.
      events: ['click'],
      scales: {
        x: {
          type: 'time',
          // Round UTC ticks of our own, about one per 70 px.
          afterBuildTicks(scale) {
            scale.ticks = utcTicks(scale.min, scale.max, Math.max(2, Math.floor(scale.width / 70))).map((value) => ({ value }));
          },
          ticks: {
            maxRotation: 0,
            autoSkip: false,
            callback(value) {
              const s = this.chart.scales.x;
              return utcTickLabel(Number(value), utcTickStep(s.min, s.max, Math.max(2, Math.floor(s.width / 70))));
            },
          },
          title: { display: true, text: 'time (UTC)' },
        },
        y: {
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
            if (i === 0) ci.setDatasetVisibility(1, ci.isDatasetVisible(0)); // the band is two datasets
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

/** The six datasets of a chart (band upper, band lower, total, spin, orbit, background), decimated. */
export function buildSeriesData(kind: ChartKind, series: readonly SeriesPoint[], gaps: readonly GapSpan[], buckets: number, withBackground: boolean): XY[][] {
  const f = FIELDS[kind];
  const n = series.length;
  const times = new Float64Array(n);
  const pick = (field: Field): (number | null)[] => {
    const out = new Array<number | null>(n);
    for (let i = 0; i < n; i++) out[i] = series[i].s[field] as number | null;
    return out;
  };
  for (let i = 0; i < n; i++) times[i] = series[i].t;
  const step = medianStepMs(series);
  // A step over five cadences without a reported gap is still drawn as a break.
  const maxStep = step === undefined ? Infinity : 5 * step;
  const flags = breaksBefore(times, gaps, maxStep);
  const totals = pick(f.total);
  const line = (values: (number | null)[]): XY[] => decimateMinMax(lineFromBreaks(times, values, flags), buckets);
  const band = bandFromBreaks(times, totals, pick(f.sigma), flags, buckets);
  return [
    band.map((p) => ({ x: p.x, y: p.hi })),
    band.map((p) => ({ x: p.x, y: p.lo })),
    line(totals),
    line(pick(f.spin)),
    line(pick(f.orbit)),
    // A hidden line is not decimated at all; the legend toggle rebuilds the data.
    withBackground ? line(pick(f.background)) : [],
  ];
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

/** Replaces the chart's data from the series, decimated to `buckets` (about its width in px). */
export function setSeriesData(chart: LineChart, kind: ChartKind, series: readonly SeriesPoint[], gaps: readonly GapSpan[], buckets: number, xRange?: [number, number]): void {
  inputs.set(chart, [chart, kind, series, gaps, buckets, xRange]);
  const n = series.length;
  const range = xRange ?? (n > 0 ? ([series[0].t, series[n - 1].t] as [number, number]) : undefined);
  applySeriesData(chart, buildSeriesData(kind, series, gaps, buckets, chart.isDatasetVisible(5)), range);
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
    ...(s.flags && s.flags.length > 0 ? [`flags: ${s.flags.join(', ')}`] : []),
  ];
}
