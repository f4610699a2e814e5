// The frame at the mid-time of a pair, where inferred velocities belong: the maps averaged
// ((a + b) / 2, NaN where either is NaN), the time halfway. Pass it with the inferred velocity to
// fluxTransport so that Bn (and, with dave4vm, B_t) are those the velocity was fitted to.

import type { Frame } from '../frame.js';

function average(p: Float64Array | undefined, q: Float64Array | undefined): Float64Array | undefined {
  if (!p || !q) return undefined;
  const out = new Float64Array(p.length);
  for (let i = 0; i < p.length; i++) out[i] = 0.5 * (p[i] + q[i]);
  return out;
}

/** Mid-time frame of a checked pair (same grid): bn, and bx, by when both frames carry them. */
export function midFrame(a: Frame, b: Frame): Frame {
  const bx = average(a.bx, b.bx), by = average(a.by, b.by);
  const source = `${a.provenance?.source ?? 'first frame'} + ${b.provenance?.source ?? 'second frame'}`;
  return {
    nx: a.nx, ny: a.ny, dx: a.dx, dy: a.dy, time: (a.time + b.time) / 2,
    bn: average(a.bn, b.bn)!, ...(bx && by ? { bx, by } : {}), provenance: { source },
  };
}
