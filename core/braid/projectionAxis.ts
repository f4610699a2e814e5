// The axis the strands are projected on, chosen per span of frames so that no two footpoints share
// a coordinate: of AXIS_CANDIDATES directions evenly spread over a half turn, the one whose
// smallest gap between two strands' coordinates, over every frame of the span, is largest (the
// first of equals). Crossings happen between frames; at the frames themselves the order is then
// as clear as the span allows. The braid of a closed span does not depend on the axis up to
// conjugation, so neither does its entropy.

import type { StrandFrame } from './strandCrossings.js';
import { along } from './strandCrossings.js';

/** Directions tried: every 3.75 degrees. */
export const AXIS_CANDIDATES = 48;

export interface ProjectionAxis {
  /** rad, in [0, pi), counter-clockwise from +x. */
  readonly angle: number;
  /** The smallest gap between two strands' coordinates on it over the span, Mm (Infinity for one strand). */
  readonly minGap: number;
}

export function chooseProjectionAxis(frames: readonly StrandFrame[], strands?: readonly number[]): ProjectionAxis {
  let best: ProjectionAxis = { angle: 0, minGap: -Infinity };
  const all = strands ?? (frames.length > 0 ? Array.from({ length: frames[0].x.length }, (_, k) => k) : []);
  const p = new Float64Array(all.length);
  for (let c = 0; c < AXIS_CANDIDATES; c++) {
    const angle = (c * Math.PI) / AXIS_CANDIDATES;
    let gap = Infinity;
    for (const f of frames) {
      all.forEach((k, j) => { p[j] = along(f, k, angle); });
      const sorted = Array.from(p).sort((a, b) => a - b);
      for (let j = 1; j < sorted.length; j++) gap = Math.min(gap, sorted[j] - sorted[j - 1]);
    }
    if (gap > best.minGap) best = { angle, minGap: gap };
  }
  return best;
}
