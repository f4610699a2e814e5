// Motion of each footpoint from a velocity field: the flux-weighted mean velocity of its pixels and
// its flux-weighted angular velocity about its centroid,
//
//   v_c   = Sum |Bn| u / Sum |Bn|
//   omega = Sum |Bn| [r x (u - v_c)]_z / Sum |Bn| r^2      (r from the flux-weighted centroid),
//
// the rigid rotation that best fits the pixels' motion (exact for a rigidly spinning footpoint).
// Only the flux transport F = Bn u enters (|Bn| u = sign(Bn) F), so nothing divides by Bn.

import type { Grid } from '../grid.js';
import type { FluxTransport } from '../fluxTransport.js';
import { CM_PER_KM, CM_PER_MM } from '../units.js';

export interface FootpointMotion {
  readonly label: number;
  /** Flux-weighted mean velocity, km/s. */
  readonly vx: number;
  readonly vy: number;
  /** Rotation rate about the centroid, rad/s, counter-clockwise seen from the corona (NaN for a single pixel). */
  readonly omega: number;
  /** Pixels with a valid velocity. */
  readonly pixels: number;
}

/** Motion of every label > 0 present among the transport's valid pixels, ascending by label. */
export function footpointMotion(t: FluxTransport, labels: Int32Array, grid: Grid): FootpointMotion[] {
  const { nx, ny, dx, dy } = grid;
  const { bn, fx, fy, valid } = t;
  const slot = new Map<number, number>();
  const sums: number[][] = [];
  // Per label: count, W, Wx, Wy, SFx, SFy, S(x Fy - y Fx), W r^2, with coordinates relative to an
  // anchor pixel (its first pixel) to keep the sums well conditioned.
  const anchor: number[][] = [];
  for (let iy = 0; iy < ny; iy++) {
    for (let ix = 0; ix < nx; ix++) {
      const i = iy * nx + ix;
      const l = labels[i];
      if (l <= 0 || !valid[i]) continue;
      let s = slot.get(l);
      if (s === undefined) {
        s = sums.length;
        slot.set(l, s);
        sums.push([l, 0, 0, 0, 0, 0, 0, 0, 0]);
        anchor.push([ix * dx, iy * dy]);
      }
      const a = sums[s];
      const x = ix * dx - anchor[s][0], y = iy * dy - anchor[s][1];
      const b = bn[i], w = Math.abs(b), sg = b < 0 ? -1 : b > 0 ? 1 : 0;
      const Fx = sg * fx[i], Fy = sg * fy[i];
      a[1]++; a[2] += w; a[3] += w * x; a[4] += w * y;
      a[5] += Fx; a[6] += Fy; a[7] += x * Fy - y * Fx; a[8] += w * (x * x + y * y);
    }
  }
  const out: FootpointMotion[] = sums.map(([label, count, W, Wx, Wy, SFx, SFy, L, I]) => {
    if (!(W > 0)) return { label, vx: NaN, vy: NaN, omega: NaN, pixels: count };
    const cx = Wx / W, cy = Wy / W;
    const vx = SFx / W, vy = SFy / W;
    // Shift the angular momentum and inertia to the centroid.
    const Lc = L - (cx * SFy - cy * SFx);
    const Ic = I - W * (cx * cx + cy * cy);
    const omega = Ic > 0 ? (Lc / Ic) * (CM_PER_KM / CM_PER_MM) : NaN;
    return { label, vx, vy, omega, pixels: count };
  });
  return out.sort((p, q) => p.label - q.label);
}
