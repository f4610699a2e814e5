// What the time charts draw beyond chart.js's lines, as a chart.js plugin: gap shading, the ±1σ
// band where it is thinner than the line, threshold lines with labels placed off the curves, the
// moments alerts were raised (clustered, labels in lanes), the picked time and the range being
// dragged out. Each draw reports what it drew (boxes, notes) for the page and its tests.

import type { Chart, Plugin } from 'chart.js';
import type { AlertMoment, ThresholdLine } from './alertMarks.js';
import { DATASET, datasetPoints } from './chartDatasets.js';
import { clusterMoments, curveColumns, placeMarkerLabels, placeThresholdLabel, type Box } from './chartLabels.js';
import type { XY } from './decimate.js';
import { SERIES_STYLE } from './palette.js';
import type { GapSpan } from './seriesMerge.js';
import { formatSci, prettyUnit } from './unitFormat.js';

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

export function chartMarks(chart: Chart): ChartMarks {
  let m = marks.get(chart);
  if (!m) {
    m = { gaps: [], thresholds: [], moments: [], drawn: EMPTY_DRAWN };
    marks.set(chart, m);
  }
  return m;
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

export const marksPlugin: Plugin<'line'> = {
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
