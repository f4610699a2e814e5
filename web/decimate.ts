// Turning a long series into chart points. A chart 1000 px wide cannot show 20,000 samples, so
// each pixel-wide bucket keeps its first, lowest, highest and last point (in time order): the
// drawn polyline then covers exactly the pixels the full series would, spikes included. A null
// value is a break in the line and always survives decimation, so gaps stay gaps.

export interface XY {
  x: number;
  y: number | null;
}

export interface BandXY {
  x: number;
  lo: number | null;
  hi: number | null;
}

export interface GapInterval {
  readonly from: number;
  readonly to: number;
}

/**
 * Where a line must break: flags[i] is true when a break goes between sample i-1 and i, because a
 * gap lies between them or they are further apart than maxStep. times must be sorted.
 */
export function breaksBefore(times: ArrayLike<number>, gaps: readonly GapInterval[] = [], maxStep = Infinity): boolean[] {
  const flags: boolean[] = new Array(times.length).fill(false);
  let g = 0;
  for (let i = 1; i < times.length; i++) {
    const prev = times[i - 1];
    const t = times[i];
    while (g < gaps.length && gaps[g].to <= prev) g++;
    // A gap counts when it overlaps the open interval between the two samples.
    const gapBetween = g < gaps.length && gaps[g].from < t && gaps[g].to > prev;
    flags[i] = gapBetween || t - prev > maxStep;
  }
  return flags;
}

/**
 * Points of one component over time with breaks: a null point (at the midpoint) goes inside every
 * gap between two consecutive samples, and between two samples further apart than maxStep.
 * values may hold null or NaN (both become a break).
 */
export function lineWithBreaks(
  times: ArrayLike<number>,
  values: ArrayLike<number | null>,
  gaps: readonly GapInterval[] = [],
  maxStep = Infinity,
): XY[] {
  return lineFromBreaks(times, values, breaksBefore(times, gaps, maxStep));
}

/** lineWithBreaks with the break flags already computed (one breaksBefore serves every component). */
export function lineFromBreaks(times: ArrayLike<number>, values: ArrayLike<number | null>, flags: readonly boolean[]): XY[] {
  const out: XY[] = [];
  for (let i = 0; i < times.length; i++) {
    if (flags[i]) out.push({ x: (times[i - 1] + times[i]) / 2, y: null });
    const v = values[i];
    out.push({ x: times[i], y: v === null || !Number.isFinite(v) ? null : v });
  }
  return out;
}

/** Bucket index of x among `buckets` equal buckets over [x0, x1], clamped. */
function bucketOf(x: number, x0: number, x1: number, buckets: number): number {
  if (x1 <= x0) return 0;
  const b = Math.floor(((x - x0) / (x1 - x0)) * buckets);
  return b < 0 ? 0 : b >= buckets ? buckets - 1 : b;
}

/**
 * First/min/max/last per bucket (`buckets` about the chart's width in pixels). Series at or below
 * 4 points per bucket come back unchanged (copied). Nulls are kept, one per run of nulls.
 */
export function decimateMinMax(points: readonly XY[], buckets: number): XY[] {
  if (points.length <= 4 * buckets || buckets < 1) return points.slice();
  const x0 = points[0].x;
  const x1 = points[points.length - 1].x;
  const out: XY[] = [];
  let bucket = -1;
  let first = -1;
  let last = -1;
  let lo = -1;
  let hi = -1;
  const flush = (): void => {
    if (first < 0) return;
    // Emit the chosen indices once each, in time order.
    const picks = [first, lo, hi, last].sort((a, b) => a - b);
    let prev = -1;
    for (const k of picks) {
      if (k !== prev) out.push(points[k]);
      prev = k;
    }
    first = -1;
  };
  for (let i = 0; i < points.length; i++) {
    const p = points[i];
    if (p.y === null) {
      flush();
      if (out.length === 0 || out[out.length - 1].y !== null) out.push(p);
      bucket = -1;
      continue;
    }
    const b = bucketOf(p.x, x0, x1, buckets);
    if (b !== bucket || first < 0) {
      flush();
      bucket = b;
      first = last = lo = hi = i;
      continue;
    }
    last = i;
    if (p.y < (points[lo].y as number)) lo = i;
    if (p.y > (points[hi].y as number)) hi = i;
  }
  flush();
  return out;
}

/**
 * An uncertainty band (centre +- sigma) with lower and upper edge on the same x positions, so the
 * area between them can be filled. Per bucket it keeps the envelope (lowest lower edge, highest
 * upper edge) at the bucket's first and last time. A null centre or sigma breaks the band.
 */
export function bandWithBreaks(
  times: ArrayLike<number>,
  centre: ArrayLike<number | null>,
  sigma: ArrayLike<number | null>,
  gaps: readonly GapInterval[],
  maxStep: number,
  buckets: number,
): BandXY[] {
  return bandFromBreaks(times, centre, sigma, breaksBefore(times, gaps, maxStep), buckets);
}

/** bandWithBreaks with the break flags already computed. */
export function bandFromBreaks(
  times: ArrayLike<number>,
  centre: ArrayLike<number | null>,
  sigma: ArrayLike<number | null>,
  flags: readonly boolean[],
  buckets: number,
): BandXY[] {
  const full: BandXY[] = [];
  for (let i = 0; i < times.length; i++) {
    if (flags[i]) full.push({ x: (times[i - 1] + times[i]) / 2, lo: null, hi: null });
    const y = centre[i];
    const sv = sigma[i];
    const ok = y !== null && sv !== null && Number.isFinite(y) && Number.isFinite(sv);
    full.push(ok ? { x: times[i], lo: (y as number) - Math.abs(sv as number), hi: (y as number) + Math.abs(sv as number) } : { x: times[i], lo: null, hi: null });
  }
  const n = full.length;
  if (n <= 2 * buckets || buckets < 1) return full;
  const x0 = full[0].x;
  const x1 = full[n - 1].x;
  const out: BandXY[] = [];
  let bucket = -1;
  let fx = 0;
  let lx = 0;
  let lo = Infinity;
  let hi = -Infinity;
  let open = false;
  const flush = (): void => {
    if (!open) return;
    out.push({ x: fx, lo, hi });
    if (lx !== fx) out.push({ x: lx, lo, hi });
    open = false;
  };
  for (const p of full) {
    if (p.lo === null || p.hi === null) {
      flush();
      if (out.length === 0 || out[out.length - 1].lo !== null) out.push(p);
      bucket = -1;
      continue;
    }
    const b = bucketOf(p.x, x0, x1, buckets);
    if (!open || b !== bucket) {
      flush();
      bucket = b;
      open = true;
      fx = lx = p.x;
      lo = p.lo;
      hi = p.hi;
      continue;
    }
    lx = p.x;
    if (p.lo < lo) lo = p.lo;
    if (p.hi > hi) hi = p.hi;
  }
  flush();
  return out;
}
