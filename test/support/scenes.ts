// Synthetic scenes of our own for the analytic checks: Gaussian flux spots on a grid, with
// rigid-rotation or translation velocities.

import type { Frame } from '../../core/frame.js';
import { pixelFluxMx } from '../../core/units.js';

export interface Spot {
  /** Centre, Mm. */
  x: number; y: number;
  /** Peak field, G (sign = polarity). */
  peak: number;
  /** Gaussian width, Mm. */
  sigma: number;
  /** Spin about the spot's own centre, rad/s (counter-clockwise seen from the corona). */
  omega?: number;
  /** Translation velocity, km/s. */
  vx?: number; vy?: number;
}

/** A frame of Gaussian spots; each pixel takes the velocity of the spot that dominates it. */
export function spotFrame(nx: number, ny: number, d: number, spots: Spot[], time = 0): Frame {
  const n = nx * ny;
  const bn = new Float64Array(n), vx = new Float64Array(n), vy = new Float64Array(n);
  const labels = new Int32Array(n);
  for (let iy = 0; iy < ny; iy++) for (let ix = 0; ix < nx; ix++) {
    const i = iy * nx + ix;
    const x = ix * d, y = iy * d;
    let best = 0, bestK = -1;
    spots.forEach((s, k) => {
      const r2 = (x - s.x) ** 2 + (y - s.y) ** 2;
      const b = s.peak * Math.exp(-r2 / (2 * s.sigma * s.sigma));
      bn[i] += b;
      if (Math.abs(b) > best) { best = Math.abs(b); bestK = k; }
    });
    if (bestK >= 0) {
      const s = spots[bestK];
      // omega (rad/s) times Mm gives Mm/s; times 1000 gives km/s.
      const w = (s.omega ?? 0) * 1000;
      vx[i] = (s.vx ?? 0) - w * (y - s.y);
      vy[i] = (s.vy ?? 0) + w * (x - s.x);
      if (best > 1e-3 * Math.abs(s.peak)) labels[i] = bestK + 1;
    }
  }
  return { time, nx, ny, dx: d, dy: d, bn, vx, vy, labels };
}

/** Flux of the pixels carrying `label` (all pixels when label is undefined), Mx. */
export function labelFlux(frame: Frame, label?: number): number {
  let s = 0;
  for (let i = 0; i < frame.bn.length; i++) {
    if (label === undefined || frame.labels![i] === label) s += frame.bn[i];
  }
  return pixelFluxMx(s, frame.dx, frame.dy);
}
