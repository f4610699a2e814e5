// Synthetic scenes of our own: elliptical Gaussian flux concentrations on a grid, seeded noise,
// and the rigid velocity fields that move them. Used by the footpoint tests and the benchmark.

import type { Frame } from '../../core/frame.js';
import { CM_PER_MM } from '../../core/units.js';
import { seededNormal } from '../support/random.js';

export interface Spot {
  /** Centre, Mm. */
  x: number;
  y: number;
  /** Gaussian widths along the major and minor axis, Mm. */
  a: number;
  b: number;
  /** Major axis angle, rad, counter-clockwise from +x. */
  angle: number;
  /** Peak field, G (signed). */
  peak: number;
}

export interface SceneGrid { nx: number; ny: number; dx: number; dy: number }

/** Adds the spot's field to bn (pixel (ix, iy) at (ix dx, iy dy) Mm). Only within 7 widths, for speed. */
export function paintSpot(bn: Float64Array, g: SceneGrid, s: Spot): void {
  const c = Math.cos(s.angle), sn = Math.sin(s.angle);
  const reach = 7 * Math.max(s.a, s.b);
  const x0 = Math.max(0, Math.floor((s.x - reach) / g.dx)), x1 = Math.min(g.nx - 1, Math.ceil((s.x + reach) / g.dx));
  const y0 = Math.max(0, Math.floor((s.y - reach) / g.dy)), y1 = Math.min(g.ny - 1, Math.ceil((s.y + reach) / g.dy));
  for (let iy = y0; iy <= y1; iy++) {
    for (let ix = x0; ix <= x1; ix++) {
      const X = ix * g.dx - s.x, Y = iy * g.dy - s.y;
      const u = c * X + sn * Y, v = -sn * X + c * Y;
      bn[iy * g.nx + ix] += s.peak * Math.exp(-0.5 * ((u / s.a) ** 2 + (v / s.b) ** 2));
    }
  }
}

/** Total flux of a Gaussian spot, Mx: 2 pi a b peak (Mm^2 -> cm^2). */
export function spotFlux(s: Spot): number {
  return 2 * Math.PI * s.a * s.b * s.peak * CM_PER_MM * CM_PER_MM;
}

export function addNoise(bn: Float64Array, sigma: number, seed: number): void {
  const r = seededNormal(seed);
  for (let i = 0; i < bn.length; i++) bn[i] += sigma * r();
}

export function sceneField(g: SceneGrid, spots: Spot[], noise = 0, seed = 1): Float64Array {
  const bn = new Float64Array(g.nx * g.ny);
  for (const s of spots) paintSpot(bn, g, s);
  if (noise > 0) addNoise(bn, noise, seed);
  return bn;
}

export function sceneFrame(g: SceneGrid, time: number, spots: Spot[], noise = 0, seed = 1): Frame {
  return { time, ...g, bn: sceneField(g, spots, noise, seed) };
}

/**
 * Velocity (km/s) of rigid motions: pixel inside radius `reach` (Mm) of a spot moves with that spot,
 * translating at (vx, vy) km/s and spinning at omega rad/s about its centre.
 */
export function spotVelocity(g: SceneGrid, parts: { spot: Spot; vx: number; vy: number; omega: number; reach: number }[]): { vx: Float64Array; vy: Float64Array } {
  const vx = new Float64Array(g.nx * g.ny), vy = new Float64Array(g.nx * g.ny);
  for (let iy = 0; iy < g.ny; iy++) {
    for (let ix = 0; ix < g.nx; ix++) {
      const X = ix * g.dx, Y = iy * g.dy;
      for (const p of parts) {
        const u = X - p.spot.x, v = Y - p.spot.y;
        if (u * u + v * v > p.reach * p.reach) continue;
        // omega (rad/s) times Mm gives Mm/s; times 1000 gives km/s.
        vx[iy * g.nx + ix] = p.vx - p.omega * v * 1000;
        vy[iy * g.nx + ix] = p.vy + p.omega * u * 1000;
      }
    }
  }
  return { vx, vy };
}
