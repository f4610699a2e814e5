// What the browser tests read (and anyone curious in the console): window.helicordProbe. It reads
// the store and the panels and measures on scratch copies; it changes nothing shown.

import type { Chart } from 'chart.js';
import { noOverlap } from './chartLabels.js';
import { BRAID_LINE, braidSegmentsDrawn } from './braidChart.js';
import { flaggedTriples } from './braidWords.js';
import { datasetPoints } from './chartDatasets.js';
import { chartMarks, type ChartDrawn } from './chartMarks.js';
import type { XY } from './decimate.js';
import { FLUX_DATASET } from './fluxChart.js';
import type { MapView } from './mapView.js';
import { measureChartRedraw, measureMapDraw } from './pagePerformance.js';
import type { PageStore } from './pageStore.js';
import { shownRange } from './panels/chartView.js';
import { SPHERE_LINE } from './sphereChart.js';

declare global {
  interface Window {
    helicordProbe: unknown;
  }
}

function chartReport(chart: Chart<'line', XY[]>, extra: Record<string, unknown> = {}) {
  const d: ChartDrawn = chartMarks(chart).drawn;
  return {
    markers: d.markers, thresholdLines: d.thresholdLines, offScale: d.offScale,
    markerBoxes: d.markerBoxes, labelBoxes: d.labelBoxes, keyedThresholds: d.keyedThresholds,
    boxesApart: noOverlap([...d.markerBoxes, ...d.labelBoxes]),
    bandHalfPx: d.bandHalfPx, bandWidened: d.bandWidened,
    points: datasetPoints(chart, 'total').length,
    xRange: [chart.scales.x?.min, chart.scales.x?.max],
    xTicks: (chart.scales.x?.ticks ?? []).map((t) => String(t.label ?? '')),
    yTicks: (chart.scales.y?.ticks ?? []).map((t) => String(t.label ?? '')),
    plot: plotBox(chart),
    ...extra,
  };
}

/** The plot area's box on the page (px). */
function plotBox(chart: Chart) {
  const r = chart.canvas.getBoundingClientRect();
  const a = chart.chartArea;
  return a ? { x: r.x + a.left, y: r.y + a.top, w: a.right - a.left, h: a.bottom - a.top } : null;
}

/** What a compact chart shows: its points per line (non-null), ticks, range and plot box on the page. */
function compactReport(chart: Chart<'line', XY[]>) {
  const r = chart.canvas.getBoundingClientRect();
  return {
    points: chart.data.datasets.map((d) => d.data.filter((p) => p.y !== null).length),
    labels: chart.data.datasets.map((d) => String(d.label ?? '')),
    xRange: [chart.scales.x?.min, chart.scales.x?.max],
    xTicks: (chart.scales.x?.ticks ?? []).map((t) => String(t.label ?? '')),
    yTicks: (chart.scales.y?.ticks ?? []).map((t) => String(t.label ?? '')),
    visible: r.width > 0 && r.height > 0,
    plot: plotBox(chart),
  };
}

export function installProbe(
  store: PageStore,
  charts: { rate: Chart<'line', XY[]>; budget: Chart<'line', XY[]>; flux: Chart<'line', XY[]>; braid: Chart<'line', XY[]>; sphere: Chart<'line', XY[]> },
  map: MapView,
): void {
  window.helicordProbe = {
    state: () => {
      const s = store.get();
      return {
        region: s.region,
        regionsLoaded: s.regionsLoaded,
        regions: s.regions.length,
        samples: s.series.length,
        lastSampleTime: s.series.length > 0 ? s.series[s.series.length - 1].s.time : null,
        alerts: s.alerts.map((a) => ({ id: a.id, rule: a.rule, state: a.state, acknowledged: a.acknowledged })),
        link: s.linkState,
        linkOpens: s.linkOpens,
        follow: s.follow,
        view: s.view,
        shownRange: shownRange(s) ?? null,
        gapFactor: s.gapFactor ?? null,
        mapFrame: map.currentFrameId() ?? null,
        selectedFootpoint: s.selectedFootpoint,
        map: { ...map.report, colourBar: map.colourBarUnit(), colourLimit: map.colourLimit(), bnRange: map.bnRange() },
        rateChart: chartReport(charts.rate),
        budgetChart: chartReport(charts.budget, { thresholds: chartMarks(charts.budget).thresholds.map((t) => t.value) }),
        braidChart: {
          ...compactReport(charts.braid),
          window: charts.braid.data.datasets[BRAID_LINE.window].data.filter((p) => p.y !== null).length,
          run: charts.braid.data.datasets[BRAID_LINE.run].data[0]?.y ?? null,
          segmentsDrawn: braidSegmentsDrawn(charts.braid),
          fetched: s.braid === undefined ? 'no' : s.braid === null ? 'absent' : 'yes',
          flaggedTriples: flaggedTriples(s.braid ?? undefined).map((t) => t.ids.join('-')),
        },
        sphereChart: {
          ...compactReport(charts.sphere),
          rotation: charts.sphere.data.datasets[SPHERE_LINE.rotation].data.filter((p) => p.y !== null).length,
          own: charts.sphere.data.datasets[SPHERE_LINE.own].data.filter((p) => p.y !== null).length,
        },
        fluxChart: {
          flux: charts.flux.data.datasets[FLUX_DATASET.flux].data.filter((p) => p.y !== null).length,
          normalised: charts.flux.data.datasets[FLUX_DATASET.normalised].data.filter((p) => p.y !== null).length,
          yTicks: (charts.flux.scales.y?.ticks ?? []).map((t) => String(t.label ?? '')),
        },
      };
    },
    measureChartRedraw: (samples = 20_000) => measureChartRedraw(charts.rate.canvas, samples),
    measureMapDraw: (size = 1024) => measureMapDraw(map.canvas, map.bar, size),
  };
}

