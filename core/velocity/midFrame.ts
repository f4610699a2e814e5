// The frame at the mid-time of a pair, where inferred velocities belong: the maps averaged
// ((a + b) / 2, NaN where either is NaN), the time halfway. Pass it with the inferred velocity to
// fluxTransport so that Bn (and, with dave4vm, B_t) are those the velocity was fitted to.

import type { Frame } from '../frame.js';

/** (p + q) / 2 pixel by pixel (NaN where either is NaN). */
export function averageMaps(p: Float64Array, q: Float64Array): Float64Array {
  const out = new Float64Array(p.length);
  for (let i = 0; i < p.length; i++) out[i] = 0.5 * (p[i] + q[i]);
  return out;
}

/** Mid-time frame of a checked pair (same grid): bn, and bx, by when both frames carry them. */
export function midFrame(a: Frame, b: Frame): Frame {
  const bx = a.bx && b.bx && averageMaps(a.bx, b.bx), by = a.by && b.by && averageMaps(a.by, b.by);
  const source = `${a.provenance?.source ?? 'first frame'} + ${b.provenance?.source ?? 'second frame'}`;
  return {
    nx: a.nx, ny: a.ny, dx: a.dx, dy: a.dy, time: (a.time + b.time) / 2,
    bn: averageMaps(a.bn, b.bn), ...(bx && by ? { bx, by } : {}), provenance: { source },
  };
}
