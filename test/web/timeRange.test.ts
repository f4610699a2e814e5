// The charts' time range: the last N hours follow new samples, a drag gives a fixed span, a pan
// stops at the series' ends; the gap rule comes from the server; the exports cover the range.
import { describe, expect, it } from 'vitest';
import { ALL, fixedView, indexRange, lastHours, MIN_SPAN_MS, panView, viewLabel, viewRange } from '../../web/timeRange.js';
import { breakStepMs } from '../../web/gapRule.js';
import { pointsInRange, rangeCsv, rangeJson } from '../../web/rangeExport.js';
import { SERIES_COLUMNS } from '../../core/seriesColumns.js';
import type { SeriesPoint } from '../../web/seriesMerge.js';
import type { WireSample } from '../../web/wire.js';

const H = 3_600_000;
const T0 = Date.UTC(2026, 2, 14, 0, 0, 0);

describe('time views', () => {
  it('show all, the last hours (following the newest sample), or a fixed span', () => {
    expect(viewRange(ALL, T0, T0 + 30 * H)).toEqual([T0, T0 + 30 * H]);
    expect(viewRange(lastHours(6), T0, T0 + 30 * H)).toEqual([T0 + 24 * H, T0 + 30 * H]);
    expect(viewRange(lastHours(24), T0, T0 + 3 * H)).toEqual([T0, T0 + 3 * H]); // never before the first sample
    expect(viewRange(fixedView(T0 + 5 * H, T0 + 2 * H), T0, T0 + 30 * H)).toEqual([T0 + 2 * H, T0 + 5 * H]);
    expect(viewRange(ALL, undefined, undefined)).toBeUndefined();
  });

  it('widen a drag narrower than a minute about its middle', () => {
    const v = fixedView(T0 + 1000, T0);
    expect(v).toEqual({ kind: 'fixed', from: T0 + 500 - MIN_SPAN_MS / 2, to: T0 + 500 + MIN_SPAN_MS / 2 });
  });

  it('pan by a fraction of the span and stop at the ends', () => {
    expect(panView(lastHours(6), T0, T0 + 30 * H, -0.5)).toEqual({ kind: 'fixed', from: T0 + 21 * H, to: T0 + 27 * H });
    expect(panView(fixedView(T0 + 2 * H, T0 + 8 * H), T0, T0 + 30 * H, -0.5)).toEqual({ kind: 'fixed', from: T0, to: T0 + 6 * H });
    expect(panView(fixedView(T0 + 20 * H, T0 + 28 * H), T0, T0 + 30 * H, 1)).toEqual({ kind: 'fixed', from: T0 + 22 * H, to: T0 + 30 * H });
    expect(panView(ALL, T0, T0 + 30 * H, 0.5)).toEqual(ALL); // nothing to pan over
  });

  it('say the range in words, in UTC', () => {
    expect(viewLabel(lastHours(6), [T0 + 24 * H, T0 + 30 * H])).toBe('last 6 h: 2026-03-15 00:00 UTC – 2026-03-15 06:00 UTC');
    expect(viewLabel(ALL, undefined)).toBe('all');
  });

  it('find the samples inside a range by binary search', () => {
    const times = [0, 10, 20, 30, 40];
    expect(indexRange(times, 10, 30)).toEqual([1, 4]);
    expect(indexRange(times, 11, 29)).toEqual([2, 3]);
    expect(indexRange(times, 50, 60)).toEqual([5, 5]);
  });
});

describe('the gap rule from the server', () => {
  it('breaks lines at the server factor times the server cadence', () => {
    expect(breakStepMs(3, 720, 60_000)).toBe(3 * 720_000);
    expect(breakStepMs(5, 45, undefined)).toBe(225_000);
    // An older monitor without the factor: the core's default factor (3) and its cadence.
    expect(breakStepMs(undefined, 720, undefined)).toBe(3 * 720_000);
    // No cadence from the server yet: the page's own median step.
    expect(breakStepMs(3, null, 60_000)).toBe(180_000);
    expect(breakStepMs(3, null, undefined)).toBe(Infinity);
  });
});

const row = (k: number): SeriesPoint => {
  const time = new Date(T0 + k * 720_000).toISOString();
  const s = {
    time, dt_s: 720, rate_total: k, rate_spin: Number.NaN, rate_orbit: 0, rate_background: 0, budget_total: k * 720, budget_spin: 0, budget_orbit: 0,
    budget_background: 0, rate_total_ga: k, rate_emergence: null, rate_shear: null, sigma_rate_total: 1, sigma_budget_total: 2, sigma_rate_spin: 0,
    sigma_rate_orbit: 0, velocity_method: 'dave', split_method: 'labels', noise_g: 5, masked_fraction: 0, flags: ['a', 'b'], frame_id: k,
    flux_unsigned: 1e21, budget_normalised: k * 720 / 1e42, centre_lon_deg: null, centre_lat_deg: null, centre_disk_angle_deg: null,
  } as WireSample;
  return { t: Date.parse(time), s };
};

describe('exports of a range', () => {
  const series = Array.from({ length: 20 }, (_, k) => row(k));
  it('hold the samples of the range only, in the monitor export columns', () => {
    const pts = pointsInRange(series, T0 + 5 * 720_000, T0 + 9 * 720_000);
    expect(pts.map((p) => p.s.frame_id)).toEqual([5, 6, 7, 8, 9]);
    const lines = rangeCsv(pts).trim().split('\n');
    expect(lines[0]).toBe(SERIES_COLUMNS.join(','));
    expect(lines).toHaveLength(6);
    const first = Object.fromEntries(lines[1].split(',').map((v, i) => [SERIES_COLUMNS[i], v]));
    expect(first).toMatchObject({ time: series[5].s.time, rate_total: '5', rate_spin: '', flags: 'a;b', frame_id: '5' });
    const json = JSON.parse(rangeJson('r', pts, [{ from: T0, to: T0 + 1000, bridged: false }, { from: T0 + 6 * 720_000, to: T0 + 7 * 720_000, bridged: true }], pts[0].t, pts[4].t));
    expect(json.samples).toHaveLength(5);
    expect(json.gaps).toEqual([{ from: series[6].s.time, to: series[7].s.time, bridged: true }]);
    expect(json.range).toEqual({ from: series[5].s.time, to: series[9].s.time });
  });
});
