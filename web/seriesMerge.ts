// The page's own copy of a region's series: samples sorted by time, one per time. Live samples,
// the connect snapshot and reconnect backfills all enter through mergeSamples, so a sample that
// arrives twice (snapshot overlapping a backfill, a resent message) is kept once.

import { upperMedian } from '../core/quantile.js';
import type { WireGap, WireSample } from './wire.js';

export interface SeriesPoint {
  /** Sample time, UTC ms. */
  readonly t: number;
  readonly s: WireSample;
}

export interface GapSpan {
  /** UTC ms. */
  readonly from: number;
  readonly to: number;
  readonly bridged: boolean;
}

/** Parses an ISO time to UTC ms; NaN when it is not a time. */
export function isoToMs(iso: string): number {
  return typeof iso === 'string' ? Date.parse(iso) : Number.NaN;
}

/**
 * Merges incoming samples into a sorted series and returns a new sorted array with one point per
 * time. On equal times the incoming sample wins (a later answer for the same moment replaces the
 * earlier one). Samples whose time does not parse are dropped. The input array is not changed.
 */
export function mergeSamples(series: readonly SeriesPoint[], incoming: readonly WireSample[]): SeriesPoint[] {
  const fresh: SeriesPoint[] = [];
  for (const s of incoming) {
    const t = isoToMs(s.time);
    if (Number.isFinite(t)) fresh.push({ t, s });
  }
  if (fresh.length === 0) return series.slice();
  // Stable sort keeps the last of several equal times last, so it wins below.
  fresh.sort((a, b) => a.t - b.t);
  const last = series.length > 0 ? series[series.length - 1].t : -Infinity;
  const out: SeriesPoint[] = [];
  if (fresh[0].t > last) {
    // The live case: everything is newer than what we hold.
    for (const p of series) out.push(p);
    for (const p of fresh) pushReplacingEqual(out, p);
    return out;
  }
  let i = 0;
  let j = 0;
  while (i < series.length || j < fresh.length) {
    if (j >= fresh.length || (i < series.length && series[i].t < fresh[j].t)) {
      pushReplacingEqual(out, series[i++]);
    } else {
      // Incoming at equal time is pushed after the held point and so replaces it.
      if (i < series.length && series[i].t === fresh[j].t) pushReplacingEqual(out, series[i++]);
      pushReplacingEqual(out, fresh[j++]);
    }
  }
  return out;
}

function pushReplacingEqual(out: SeriesPoint[], p: SeriesPoint): void {
  if (out.length > 0 && out[out.length - 1].t === p.t) out[out.length - 1] = p;
  else out.push(p);
}

/** ISO time of the newest sample, the `since` of a backfill request; undefined when empty. */
export function backfillSince(series: readonly SeriesPoint[]): string | undefined {
  return series.length > 0 ? series[series.length - 1].s.time : undefined;
}

/** Merges gap lists, one entry per (from, to), sorted by start. Unparseable gaps are dropped. */
export function mergeGaps(held: readonly GapSpan[], incoming: readonly WireGap[]): GapSpan[] {
  const byKey = new Map<string, GapSpan>();
  for (const g of held) byKey.set(`${g.from}|${g.to}`, g);
  for (const g of incoming) {
    const from = isoToMs(g.from);
    const to = isoToMs(g.to);
    if (!Number.isFinite(from) || !Number.isFinite(to) || to < from) continue;
    byKey.set(`${from}|${to}`, { from, to, bridged: Boolean(g.bridged) });
  }
  return [...byKey.values()].sort((a, b) => a.from - b.from || a.to - b.to);
}

/** Index of the point nearest to time t (ties go to the earlier one); -1 for an empty series. */
export function nearestIndex(series: readonly SeriesPoint[], t: number): number {
  if (series.length === 0 || !Number.isFinite(t)) return -1;
  let lo = 0;
  let hi = series.length - 1;
  while (lo < hi) {
    const mid = (lo + hi) >> 1;
    if (series[mid].t < t) lo = mid + 1;
    else hi = mid;
  }
  if (lo > 0 && t - series[lo - 1].t <= series[lo].t - t) return lo - 1;
  return lo;
}

/** Median interval between consecutive samples, ms; undefined with fewer than two samples. Long
 *  series use an evenly strided subset of at most maxSteps intervals (a cadence, not a statistic). */
export function medianStepMs(series: readonly SeriesPoint[], maxSteps = 4096): number | undefined {
  if (series.length < 2) return undefined;
  const steps: number[] = [];
  const stride = Math.max(1, Math.floor((series.length - 1) / maxSteps));
  for (let i = 1; i < series.length; i += stride) steps.push(series[i].t - series[i - 1].t);
  return upperMedian(steps);
}

/**
 * Applies a snapshot: the monitor's newest samples, authoritative from the first of them on. Held
 * samples at or after that time are replaced by the snapshot's (a rewind after a late frame moves
 * pair samples to other mid-times, so merging alone would keep stale ones); older held samples
 * stay. An empty snapshot means the region holds no sample at all.
 */
export function applySnapshot(series: readonly SeriesPoint[], snapshot: readonly WireSample[]): SeriesPoint[] {
  const fresh = mergeSamples([], snapshot);
  if (fresh.length === 0) return [];
  const from = fresh[0].t;
  const kept: SeriesPoint[] = [];
  for (const p of series) if (p.t < from) kept.push(p);
  for (const p of fresh) kept.push(p);
  return kept;
}
