// Motion of each footpoint from a velocity field: the flux-weighted mean velocity of its pixels and
// its flux-weighted mean angular velocity about its centroid.
//
//   v_c     = Sum |Bn| u / Sum |Bn|
//   omega_i = [r_i x (u_i - v_c)]_z / r_i^2                       (r from the flux-weighted centroid)
//   omega   = Sum w_i omega_i / Sum w_i,   w_i = |Bn_i| dS Phi(< r_i)
//
// Phi(< r) is the footpoint's flux closer to the centroid than r. That weight is the one under
// which -(1/2pi) Phi^2 omega is the exact spin of an axisymmetric footpoint even when it turns
// differentially: averaged over azimuth, a pixel pair turns at the rate of its outer pixel, so
// spin = -(1/pi) Int omega(r) Phi(< r) dPhi(r). For a rigid rotation every omega_i is the same
// and so is omega. It also tames the centre, where omega_i is ill-defined and Phi(< r) -> 0.
// Only the flux transport F = Bn u enters (|Bn| u = sign(Bn) F), so nothing divides by Bn.

import type { Grid } from '../grid.js';
import type { FluxTransport } from '../fluxTransport.js';
import { CM_PER_KM, CM_PER_MM } from '../units.js';
import { sortIndicesByKey } from '../indexSort.js';

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
  const pixelsOf = new Map<number, number[]>();
  for (let i = 0; i < nx * ny; i++) {
    const l = labels[i];
    if (l <= 0 || !valid[i]) continue;
    let list = pixelsOf.get(l);
    if (!list) { list = []; pixelsOf.set(l, list); }
    list.push(i);
  }
  const out: FootpointMotion[] = [];
  for (const [label, list] of pixelsOf) {
    const m = list.length;
    // Centroid and mean velocity, coordinates relative to the first pixel for conditioning.
    const x0 = (list[0] % nx) * dx, y0 = Math.floor(list[0] / nx) * dy;
    let W = 0, Wx = 0, Wy = 0, SFx = 0, SFy = 0;
    for (const i of list) {
      const b = bn[i], w = Math.abs(b), sg = b < 0 ? -1 : b > 0 ? 1 : 0;
      const x = (i % nx) * dx - x0, y = Math.floor(i / nx) * dy - y0;
      W += w; Wx += w * x; Wy += w * y; SFx += sg * fx[i]; SFy += sg * fy[i];
    }
    if (!(W > 0)) { out.push({ label, vx: NaN, vy: NaN, omega: NaN, pixels: m }); continue; }
    const cx = Wx / W, cy = Wy / W, vx = SFx / W, vy = SFy / W;
    // Pixels by distance from the centroid, for the enclosed flux.
    const r2 = new Float64Array(m), order = new Uint32Array(m);
    for (let k = 0; k < m; k++) {
      const i = list[k];
      const X = (i % nx) * dx - x0 - cx, Y = Math.floor(i / nx) * dy - y0 - cy;
      r2[k] = X * X + Y * Y;
      order[k] = k;
    }
    sortIndicesByKey(order, r2);
    let inside = 0, num = 0, den = 0;
    for (const k of order) {
      const i = list[k];
      const b = bn[i], w = Math.abs(b), sg = b < 0 ? -1 : b > 0 ? 1 : 0;
      // Midpoint rule: half of the pixel's own flux counts as inside it.
      const weight = inside + w / 2;
      inside += w;
      if (r2[k] === 0) continue;
      const X = (i % nx) * dx - x0 - cx, Y = Math.floor(i / nx) * dy - y0 - cy;
      // |Bn| [r x (u - v_c)]_z / r^2 with |Bn| u = sign(Bn) F.
      const wOmega = (X * (sg * fy[i] - w * vy) - Y * (sg * fx[i] - w * vx)) / r2[k];
      num += weight * wOmega;
      den += weight * w;
    }
    const omega = den > 0 ? (num / den) * (CM_PER_KM / CM_PER_MM) : NaN;
    out.push({ label, vx, vy, omega, pixels: m });
  }
  return out.sort((p, q) => p.label - q.label);
}
