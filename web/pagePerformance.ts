// Measurements the page can make of itself (the browser tests print them): a chart redraw with a
// long series and a large map draw, timed with performance.now() on the very code paths the panels
// use, on a scratch chart/canvas of the same size as the live one so the live panels are untouched.

import { applySeriesData, buildSeriesData, createSeriesChart, setSeriesData } from './charts.js';
import { upperMedian } from '../core/quantile.js';
import { decodeFloat32Base64 } from './float32Base64.js';
import { MapView } from './mapView.js';
import { mergeSamples } from './seriesMerge.js';
import type { WireSample, WireFootpoint } from './wire.js';

function scratchCanvas(like: HTMLCanvasElement): { canvas: HTMLCanvasElement; box: HTMLDivElement } {
  const box = document.createElement('div');
  box.style.cssText = `position:fixed;left:-10000px;top:0;width:${like.clientWidth}px;height:${like.clientHeight}px;`;
  const canvas = document.createElement('canvas');
  canvas.style.cssText = 'width:100%;height:100%;';
  box.append(canvas);
  document.body.append(box);
  return { canvas, box };
}

function syntheticSample(i: number, t0: number, stepS: number): WireSample {
  const rate = 3e36 * Math.sin(i / 500) + 1e36 * Math.sin(i / 17) + 2e36;
  return {
    time: new Date(t0 + i * stepS * 1000).toISOString(), dt_s: stepS, rate_total: rate, rate_spin: 0.6 * rate, rate_orbit: 0.35 * rate,
    rate_background: 0.05 * rate, budget_total: rate * i * stepS * 0.5, budget_spin: 0, budget_orbit: 0, budget_background: 0,
    rate_total_ga: rate, rate_emergence: null, rate_shear: null, sigma_rate_total: 0.1 * Math.abs(rate) + 1e35,
    sigma_budget_total: 1e40 + i * 1e37, velocity_method: 'given', split_method: 'labels', noise_g: 5, masked_fraction: 0, flags: [],
    frame_id: i, sigma_rate_spin: 0, sigma_rate_orbit: 0, flux_unsigned: null, budget_normalised: null,
    centre_lon_deg: null, centre_lat_deg: null, centre_disk_angle_deg: null,
  };
}

export interface ChartFigures {
  samples: number;
  pointsDrawn: number;
  /** Merge + decimate + chart update, the work after a new sample, ms (median of runs). */
  fullUpdateMs: number;
  /** Of which: building the decimated datasets, ms. */
  prepareMs: number;
  /** Of which: chart.js update and draw with those points, ms. */
  chartUpdateMs: number;
  /** Redraw of the already updated chart (hover, cursor), ms. */
  redrawMs: number;
  runs: number[];
}

export async function measureChartRedraw(like: HTMLCanvasElement, samples: number): Promise<ChartFigures> {
  const { canvas, box } = scratchCanvas(like);
  const chart = createSeriesChart(canvas, 'rate');
  try {
    const t0 = Date.UTC(2026, 0, 1);
    const wire: WireSample[] = [];
    for (let i = 0; i < samples; i++) wire.push(syntheticSample(i, t0, 60));
    let series = mergeSamples([], wire.slice(0, samples - 10));
    const gaps = [{ from: t0 + 5000 * 60_000 + 1, to: t0 + 5100 * 60_000 - 1, bridged: false }];
    const buckets = Math.max(50, Math.round(chart.chartArea?.width ?? chart.width));
    // The gap rule as the monitor's default: three 60 s cadences.
    const view = { gaps, buckets, breakStepMs: 3 * 60_000 };
    const runs: number[] = [];
    for (let k = 0; k < 10; k++) {
      const t = performance.now();
      series = mergeSamples(series, [wire[Math.min(samples - 1, samples - 10 + k)]]);
      setSeriesData(chart, 'rate', series, view);
      runs.push(performance.now() - t);
      await new Promise((r) => requestAnimationFrame(r));
    }
    // The two halves of an update: our data preparation, then chart.js taking the points.
    const prep: number[] = [];
    const upd: number[] = [];
    const range: [number, number] = [series[0].t, series[series.length - 1].t];
    for (let k = 0; k < 5; k++) {
      let t = performance.now();
      const data = buildSeriesData('rate', series, view, false);
      prep.push(performance.now() - t);
      t = performance.now();
      applySeriesData(chart, data, range);
      upd.push(performance.now() - t);
    }
    const re: number[] = [];
    for (let k = 0; k < 5; k++) {
      const t = performance.now();
      chart.draw();
      re.push(performance.now() - t);
    }
    return {
      samples, pointsDrawn: chart.data.datasets.reduce((n, d) => n + d.data.length, 0), fullUpdateMs: upperMedian(runs),
      prepareMs: upperMedian(prep), chartUpdateMs: upperMedian(upd), redrawMs: upperMedian(re), runs,
    };
  } finally {
    chart.destroy();
    box.remove();
  }
}

function toBase64(bytes: Uint8Array): string {
  let s = '';
  for (let i = 0; i < bytes.length; i += 0x8000) s += String.fromCharCode(...bytes.subarray(i, i + 0x8000));
  return btoa(s);
}

export interface MapFigures {
  size: number;
  /** base64 decode of the map answer, ms (median of 3). */
  decodeMs: number;
  /** colour raster + draw with footpoints (a new frame arriving), ms (median). */
  newFrameMs: number;
  /** redraw over the cached raster (highlight change), ms (median). */
  redrawMs: number;
  runs: number[];
}

export async function measureMapDraw(likeMap: HTMLCanvasElement, likeBar: HTMLCanvasElement, size: number): Promise<MapFigures> {
  const { canvas, box } = scratchCanvas(likeMap);
  const barBox = scratchCanvas(likeBar);
  try {
    const n = size * size;
    const data = new Float32Array(n);
    for (let iy = 0; iy < size; iy++) {
      for (let ix = 0; ix < size; ix++) {
        const a = (ix - size * 0.35) ** 2 + (iy - size * 0.5) ** 2;
        const b = (ix - size * 0.65) ** 2 + (iy - size * 0.5) ** 2;
        const w = (size * 0.08) ** 2;
        data[iy * size + ix] = 1500 * Math.exp(-a / w) - 1400 * Math.exp(-b / w) + 20 * Math.sin(ix * 0.37 + iy * 0.11);
      }
    }
    const text = toBase64(new Uint8Array(data.buffer));
    const dec: number[] = [];
    let decoded: Float32Array = new Float32Array(0);
    for (let k = 0; k < 3; k++) {
      const td = performance.now();
      decoded = decodeFloat32Base64(text, n);
      dec.push(performance.now() - td);
    }
    const decodeMs = upperMedian(dec);
    const dx = 0.36;
    const footpoints: WireFootpoint[] = [1, 2].map((id) => ({
      id, polarity: id === 1 ? 1 : -1, flux: id === 1 ? 1e22 : -1e22, x: (id === 1 ? 0.35 : 0.65) * size * dx, y: 0.5 * size * dx,
      area: Math.PI * (0.08 * size * dx) ** 2, omega: id === 1 ? 5e-5 : -2e-5, omega_method: 'velocity', spin: 1e35, spin_point: 1e35, partners: [],
    }));
    const view = new MapView(canvas, barBox.canvas);
    const runs: number[] = [];
    for (let k = 0; k < 5; k++) {
      const t = performance.now();
      view.setScene({ frameId: k, time: 0, bn: { data: decoded, nx: size, ny: size, dx, dy: dx, unit: 'G' }, footpoints, tracks: {} });
      runs.push(performance.now() - t);
      await new Promise((r) => requestAnimationFrame(r));
    }
    const re: number[] = [];
    for (let k = 0; k < 5; k++) {
      const t = performance.now();
      view.setHighlight(k % 2 ? 1 : 2);
      re.push(performance.now() - t);
    }
    return { size, decodeMs, newFrameMs: upperMedian(runs), redrawMs: upperMedian(re), runs };
  } finally {
    box.remove();
    barBox.box.remove();
  }
}
