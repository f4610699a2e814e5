// The crossings of strands in a projection on one axis: the braid word in Artin generators.
//
// Strands are footpoints followed through frames; between two frames each moves on a straight
// line (positions interpolated linearly in time). Projected on the axis e = (cos a, sin a), the
// strands are ordered by their coordinate along e (position 1 the smallest). When the strands at
// positions i and i + 1 swap, the word gains sigma_i^(+1) or sigma_i^(-1):
//   +1 when the strand coming from the left passes with the larger coordinate along e_perp
//      (e turned a quarter turn counter-clockwise): seen from the corona the pair exchanges
//      clockwise, a right-handed crossing (Boyland, Aref & Stremler 2000 take a clockwise
//      exchange as the positive generator; from memory),
//   -1 for a counter-clockwise exchange.
// Two strands on straight lines cross at most once between frames, so the swaps of an interval
// are exactly the pairs whose order differs between its two frames; they are taken in the order
// of their crossing times, each between neighbours at that moment.

/** Positions of a fixed set of strands at one time (index = strand). */
export interface StrandFrame {
  /** UTC ms. */
  readonly time: number;
  /** Mm. */
  readonly x: ArrayLike<number>;
  readonly y: ArrayLike<number>;
  /** Signed flux, Mx (for the weights; the word itself is unweighted). */
  readonly flux: ArrayLike<number>;
}

/** One Artin generator sigma_position^sign, with the strands that made it. */
export interface Crossing {
  /** 1-based position along the axis of the left strand of the swapping pair. */
  readonly position: number;
  readonly sign: 1 | -1;
  /** UTC ms, interpolated. */
  readonly time: number;
  /** Strand indices: `left` was at `position` before the swap, `right` at position + 1. */
  readonly left: number;
  readonly right: number;
  /** Flux product of the pair at the crossing, Mx^2: the pair's helicity changes by sign * weight per crossing (a half turn). */
  readonly weight: number;
  /** True when the two strands met (same place, not only the same coordinate): the sign is then a guess (+1). */
  readonly collision: boolean;
}

/** Coordinate of strand k along the axis angle `axis` (rad). */
export function along(frame: StrandFrame, k: number, axis: number): number {
  return frame.x[k] * Math.cos(axis) + frame.y[k] * Math.sin(axis);
}

/** Coordinate of strand k across the axis (along e_perp, a quarter turn counter-clockwise from e). */
export function across(frame: StrandFrame, k: number, axis: number): number {
  return -frame.x[k] * Math.sin(axis) + frame.y[k] * Math.cos(axis);
}

/** The strands `strands` (indices into the frame) ordered by their coordinate along the axis. */
export function projectionOrder(frame: StrandFrame, strands: readonly number[], axis: number): number[] {
  return [...strands].sort((a, b) => along(frame, a, axis) - along(frame, b, axis) || a - b);
}

/**
 * The crossings between frames `a` and `b` of the strands in `order` (their order along the axis
 * at `a`; indices into the frames), in time order, and the order at `b`. Pure.
 */
export function crossingsBetween(a: StrandFrame, b: StrandFrame, order: readonly number[], axis: number): { crossings: Crossing[]; order: number[] } {
  const cur = [...order];
  const p0 = (k: number) => along(a, k, axis), p1 = (k: number) => along(b, k, axis);
  const crossings: Crossing[] = [];
  const n = cur.length;
  // Each swap removes one inversion against the end order; n^2 swaps at most.
  for (let guard = 0; guard <= n * n; guard++) {
    let best = -1, bestS = Infinity;
    for (let j = 0; j + 1 < n; j++) {
      const u = cur[j], v = cur[j + 1];
      if (!(p1(u) > p1(v))) continue; // still in order at b: they do not cross in this interval
      const du = p1(u) - p0(u), dv = p1(v) - p0(v);
      const s = du - dv > 0 ? Math.min(1, Math.max(0, (p0(v) - p0(u)) / (du - dv))) : 0;
      if (s < bestS) { bestS = s; best = j; }
    }
    if (best < 0) break;
    const u = cur[best], v = cur[best + 1];
    const s = bestS;
    const qu = across(a, u, axis) + s * (across(b, u, axis) - across(a, u, axis));
    const qv = across(a, v, axis) + s * (across(b, v, axis) - across(a, v, axis));
    const fu = a.flux[u] + s * (b.flux[u] - a.flux[u]);
    const fv = a.flux[v] + s * (b.flux[v] - a.flux[v]);
    crossings.push({
      position: best + 1, sign: qu >= qv ? 1 : -1, time: a.time + s * (b.time - a.time),
      left: u, right: v, weight: fu * fv, collision: qu === qv,
    });
    cur[best] = v; cur[best + 1] = u;
  }
  return { crossings, order: cur };
}

/** The braid word of `strands` (default all) through `frames` on the axis `axis`. */
export function braidWord(frames: readonly StrandFrame[], axis: number, strands?: readonly number[]): Crossing[] {
  if (frames.length === 0) return [];
  const all = strands ?? Array.from({ length: frames[0].x.length }, (_, k) => k);
  let order = projectionOrder(frames[0], all, axis);
  const word: Crossing[] = [];
  for (let f = 1; f < frames.length; f++) {
    const step = crossingsBetween(frames[f - 1], frames[f], order, axis);
    word.push(...step.crossings);
    order = step.order;
  }
  return word;
}
