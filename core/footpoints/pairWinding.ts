// The braid diagnostic of a pair of footpoints: the unwrapped angle of their centroid separation,
// accumulated frame by frame. A full counter-clockwise turn of b about a adds one turn. Each step
// is taken as the shortest way round (|step| < half a turn), so frames must be close enough for a
// pair to turn less than half a turn between them.

export interface PairWinding {
  /** Footpoint ids, a < b; the angle is that of centroid b minus centroid a. */
  readonly a: number;
  readonly b: number;
  /** Angle at the last frame, rad. */
  readonly angle: number;
  /** Accumulated angle since the pair was first seen, rad. */
  readonly winding: number;
  /** Time integral of the pair's point-estimate orbit rate, Mx^2. */
  readonly orbitBudget: number;
  /** Frames over which the pair was followed. */
  readonly steps: number;
}

/** Separation angle of b - a, rad. */
export function separationAngle(ax: number, ay: number, bx: number, by: number): number {
  return Math.atan2(by - ay, bx - ax);
}

/** The step from one angle to the next taken the shortest way round, in (-pi, pi]. */
export function angleStep(from: number, to: number): number {
  let d = (to - from) % (2 * Math.PI);
  if (d <= -Math.PI) d += 2 * Math.PI;
  else if (d > Math.PI) d -= 2 * Math.PI;
  return d;
}

/** A number naming the unordered pair (ids below 2^26 keep it exact). */
export function pairKey(a: number, b: number): number {
  return a < b ? a * 67108864 + b : b * 67108864 + a;
}
