// The Injection rate and Budget panels: the two time charts with their hover readout, the picked
// sample (click or arrow keys; the map shows its frame), a range dragged out on either chart, and
// the notes under them (the velocity method and its caveats, the ±1σ band, thresholds that have no
// room on the chart or lie beyond its scale).

import type { Chart } from 'chart.js';
import { budgetThresholds, raisedMoments, rateThresholds } from '../alertMarks.js';
import { chartMarks, type ChartDrawn } from '../chartMarks.js';
import { createSeriesChart, readoutLines, setSeriesData, timeAtPixel, type ChartKind } from '../charts.js';
import type { XY } from '../decimate.js';
import { byId } from '../dom.js';
import { provenanceLine } from '../ledgerCells.js';
import { touched, type PageStore } from '../pageStore.js';
import { nearestIndex } from '../seriesMerge.js';
import { fixedView } from '../timeRange.js';
import { formatSci, prettyUnit } from '../unitFormat.js';
import { seriesViewOf } from './chartView.js';

export type TimeCharts = Record<ChartKind, Chart<'line', XY[]>>;

const KINDS = ['rate', 'budget'] as const;
/** A press that moves less than this (px) is a click (pick), more a drag (range). */
const DRAG_PX = 6;

function noteText(kind: ChartKind, drawn: ChartDrawn, sigma: number | null | undefined): string {
  const unit = prettyUnit(kind === 'rate' ? 'Mx^2/s' : 'Mx^2');
  const parts: string[] = [];
  if (drawn.bandWidened) {
    parts.push(`±1σ band thinner than the line at this scale, drawn 4 px wide${sigma != null && Number.isFinite(sigma) ? ` (σ of the newest total ${formatSci(sigma)} ${unit})` : ''}`);
  }
  if (drawn.keyedThresholds.length > 0) parts.push(`thresholds (dashed lines): ${drawn.keyedThresholds.join('; ')}`);
  if (drawn.offScaleThresholds.length > 0) parts.push(`thresholds beyond the scale: ${drawn.offScaleThresholds.join(', ')}`);
  return parts.join(' · ');
}

export function mountTimeCharts(store: PageStore): TimeCharts {
  const charts: TimeCharts = {
    rate: createSeriesChart(byId<HTMLCanvasElement>('rate-chart'), 'rate'),
    budget: createSeriesChart(byId<HTMLCanvasElement>('budget-chart'), 'budget'),
  };
  const readouts: Record<ChartKind, HTMLElement> = { rate: byId('rate-readout'), budget: byId('budget-readout') };
  const notes: Record<ChartKind, HTMLElement> = { rate: byId('rate-note'), budget: byId('budget-note') };
  const empties: Record<ChartKind, HTMLElement> = { rate: byId('rate-empty'), budget: byId('budget-empty') };
  const provenance = byId('rate-provenance');
  for (const kind of KINDS) {
    chartMarks(charts[kind]).onDrawn = (drawn) => {
      const s = store.get();
      const last = s.series[s.series.length - 1]?.s;
      const text = noteText(kind, drawn, kind === 'rate' ? last?.sigma_rate_total : last?.sigma_budget_total);
      if (notes[kind].textContent !== text) notes[kind].textContent = text;
    };
  }

  let pending = false;
  const draw = (): void => {
    const s = store.get();
    provenance.textContent = provenanceLine(s.series.at(-1)?.s);
    const moments = raisedMoments(s.alerts);
    const picked = s.pickedIndex >= 0 ? s.series[s.pickedIndex]?.t : undefined;
    for (const kind of KINDS) {
      const chart = charts[kind];
      const m = chartMarks(chart);
      m.gaps = s.gaps;
      m.thresholds = kind === 'budget' ? budgetThresholds(s.alerts) : rateThresholds(s.alerts);
      m.moments = moments;
      m.cursor = picked;
      setSeriesData(chart, kind, s.series, seriesViewOf(s, chart.chartArea?.width ?? chart.width));
      empties[kind].hidden = s.series.length > 0;
      empties[kind].textContent = s.region
        ? 'no samples yet: a rate needs two frames of the region, the first comes with its second frame'
        : 'no region chosen';
    }
  };
  const schedule = (): void => {
    if (pending) return;
    pending = true;
    requestAnimationFrame(() => {
      pending = false;
      draw();
    });
  };

  const showReadout = (kind: ChartKind, index: number, offsetX?: number): void => {
    const s = store.get();
    const p = s.series[index];
    const box = readouts[kind];
    if (!p) {
      box.hidden = true;
      return;
    }
    box.textContent = readoutLines(kind, p.s, p.t).join('\n');
    box.hidden = false;
    const chart = charts[kind];
    const x = offsetX ?? chart.scales.x.getPixelForValue(p.t);
    box.style.left = `${Math.max(0, Math.min(chart.width - box.offsetWidth - 4, x + 12))}px`;
    box.style.top = `${(chart.chartArea?.top ?? 0) + 16}px`;
  };
  const setHover = (t: number | undefined, selection?: [number, number]): void => {
    for (const kind of KINDS) {
      const m = chartMarks(charts[kind]);
      m.hover = t;
      m.selection = selection;
      charts[kind].draw();
    }
  };
  const pick = (index: number): void => {
    if (!store.get().series[index]) return;
    store.set({ pickedIndex: index, follow: false });
  };

  for (const kind of KINDS) {
    const chart = charts[kind];
    const canvas = chart.canvas;
    let pressX: number | undefined;
    let pressT: number | undefined;
    canvas.addEventListener('mousedown', (ev) => {
      const t = timeAtPixel(chart, ev.offsetX, ev.offsetY);
      if (t === undefined || ev.button !== 0) return;
      pressX = ev.offsetX;
      pressT = t;
    });
    canvas.addEventListener('mousemove', (ev) => {
      const t = timeAtPixel(chart, ev.offsetX, ev.offsetY);
      const series = store.get().series;
      const dragging = pressX !== undefined && pressT !== undefined && Math.abs(ev.offsetX - pressX) >= DRAG_PX;
      const i = t === undefined ? -1 : nearestIndex(series, t);
      if (i < 0) {
        readouts[kind].hidden = true;
        setHover(undefined, dragging && t !== undefined ? [pressT!, t] : undefined);
        return;
      }
      setHover(series[i].t, dragging && t !== undefined ? [pressT!, t] : undefined);
      showReadout(kind, i, ev.offsetX);
    });
    canvas.addEventListener('mouseleave', () => {
      readouts[kind].hidden = true;
      pressX = undefined;
      pressT = undefined;
      setHover(undefined);
    });
    canvas.addEventListener('mouseup', (ev) => {
      const start = pressX;
      const startT = pressT;
      pressX = undefined;
      pressT = undefined;
      if (start === undefined || startT === undefined) return; // the legend handles its own clicks
      const a = chart.chartArea;
      const x = Math.max(a.left, Math.min(a.right, ev.offsetX));
      const t = chart.scales.x.getValueForPixel(x);
      if (t === undefined) return;
      if (Math.abs(ev.offsetX - start) >= DRAG_PX) {
        setHover(undefined);
        store.set({ view: fixedView(startT, t) });
      } else pick(nearestIndex(store.get().series, t));
    });
    canvas.addEventListener('keydown', (ev) => {
      const s = store.get();
      const n = s.series.length;
      if (n === 0) return;
      const cur = s.pickedIndex >= 0 ? s.pickedIndex : n - 1;
      const step = ev.shiftKey ? 10 : 1;
      let next: number | undefined;
      if (ev.key === 'ArrowLeft') next = Math.max(0, cur - step);
      else if (ev.key === 'ArrowRight') next = Math.min(n - 1, cur + step);
      else if (ev.key === 'Home') next = 0;
      else if (ev.key === 'End') next = n - 1;
      else if (ev.key === 'Escape') {
        store.set({ follow: true, pickedIndex: -1 });
        readouts[kind].hidden = true;
        return;
      }
      if (next === undefined) return;
      ev.preventDefault();
      pick(next);
      showReadout(kind, next);
    });
    canvas.addEventListener('blur', () => {
      readouts[kind].hidden = true;
    });
  }

  store.subscribe((_s, changed) => {
    if (touched(changed, 'series', 'gaps', 'alerts', 'view', 'pickedIndex', 'gapFactor', 'status', 'region')) schedule();
  });
  let resizeTimer: ReturnType<typeof setTimeout> | undefined;
  window.addEventListener('resize', () => {
    clearTimeout(resizeTimer);
    resizeTimer = setTimeout(schedule, 100);
  });
  schedule();
  return charts;
}
