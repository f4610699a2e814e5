// A region on the sphere (docs/sphere.md): the injection by the Sun's differential rotation alone
// beside the rest (the region's own motions), on the rate chart's time axis and range, and the
// budgets north and south of the equator in words. Rows of flat patches carry none of these
// columns (absent or null): the panel is then hidden.

import type { Chart } from 'chart.js';
import type { SeriesView } from './charts.js';
import { createCompactChart, setCompactLines, viewLine } from './compactChart.js';
import type { XY } from './decimate.js';
import { OKABE_ITO } from './palette.js';
import type { SeriesPoint } from './seriesMerge.js';
import { formatSci } from './unitFormat.js';

export const SPHERE_LINE = { rotation: 0, own: 1 } as const;

export function createSphereChart(canvas: HTMLCanvasElement, alignWith?: () => Chart | undefined): Chart<'line', XY[]> {
  const lines = [];
  lines[SPHERE_LINE.rotation] = { label: 'differential rotation', color: OKABE_ITO.orange, dash: [7, 3], width: 1.8 };
  lines[SPHERE_LINE.own] = { label: 'own motions', color: OKABE_ITO.bluishGreen, dash: [], width: 1.8 };
  return createCompactChart(canvas, lines, 'dH/dt (Mx²/s)', { yTick: (v) => formatSci(v, 2), alignWith });
}

export function setSphereData(chart: Chart<'line', XY[]>, series: readonly SeriesPoint[], view: SeriesView): void {
  const times = series.map((p) => p.t);
  const lines: XY[][] = [];
  lines[SPHERE_LINE.rotation] = viewLine(times, series.map((p) => p.s.rate_rotation ?? null), view);
  lines[SPHERE_LINE.own] = viewLine(times, series.map((p) => p.s.rate_own_motions ?? null), view);
  const n = series.length;
  setCompactLines(chart, lines, view.range ?? (n > 0 ? [series[0].t, series[n - 1].t] : undefined));
}
