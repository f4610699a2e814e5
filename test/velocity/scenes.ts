// Synthetic scenes of our own for velocity inference: an analytic field (a sum of Gaussian flux
// elements of both signs) carried by an imposed flow. Each flow's frames are exact solutions of the
// normal-field evolution equation dBn/dt + div(Bn u) = 0, found along the flow's trajectories
// (method of characteristics): for a flow with div u = 0 the field is simply carried along; for the
// uniform divergence u = k (x - c), Bn(x, t) = exp(-2 k t) Bn0(c + exp(-k t)(x - c)).

import type { Frame } from '../../core/frame.js';
import { KM_PER_MM } from '../../core/units.js';
import { seededRandom } from '../support/random.js';

export interface Blob { x: number; y: number; b: number; w: number }

/** `count` flux elements (pixel coordinates) inside an nx x ny grid, seeded. */
export function randomBlobs(nx: number, ny: number, count: number, seed: number): Blob[] {
  const r = seededRandom(seed);
  return Array.from({ length: count }, () => ({
    x: 4 + r() * (nx - 8), y: 4 + r() * (ny - 8),
    b: (r() < 0.5 ? -1 : 1) * (600 + 900 * r()), w: 2.5 + 1.5 * r(),
  }));
}

export function blobField(blobs: Blob[], x: number, y: number): number {
  let s = 0;
  for (const p of blobs) s += p.b * Math.exp(-((x - p.x) ** 2 + (y - p.y) ** 2) / (2 * p.w * p.w));
  return s;
}

/** A flow in pixel units: velocity (px/s) and the field at time t given the field at 0. */
export interface Flow {
  name: string;
  velocity(x: number, y: number): [number, number];
  /** Position at time 0 of the fluid element at (x, y) at time t, and the factor on the field. */
  back(x: number, y: number, t: number): { x: number; y: number; factor: number };
}

export function translation(ux: number, uy: number): Flow {
  return { name: 'uniform translation', velocity: () => [ux, uy], back: (x, y, t) => ({ x: x - ux * t, y: y - uy * t, factor: 1 }) };
}

export function rotation(omega: number, cx: number, cy: number): Flow {
  return {
    name: 'solid rotation',
    velocity: (x, y) => [-omega * (y - cy), omega * (x - cx)],
    back: (x, y, t) => {
      const c = Math.cos(omega * t), s = Math.sin(omega * t);
      const ex = x - cx, ey = y - cy;
      return { x: cx + c * ex + s * ey, y: cy - s * ex + c * ey, factor: 1 };
    },
  };
}

export function shear(gamma: number, cy: number): Flow {
  return { name: 'shear', velocity: (_x, y) => [gamma * (y - cy), 0], back: (x, y, t) => ({ x: x - gamma * (y - cy) * t, y, factor: 1 }) };
}

export function divergence(k: number, cx: number, cy: number): Flow {
  return {
    name: 'divergence',
    velocity: (x, y) => [k * (x - cx), k * (y - cy)],
    back: (x, y, t) => {
      const e = Math.exp(-k * t);
      return { x: cx + e * (x - cx), y: cy + e * (y - cy), factor: Math.exp(-2 * k * t) };
    },
  };
}

export interface ScenePair {
  a: Frame; b: Frame;
  /** True velocity at mid-time, km/s. */
  ux: Float64Array; uy: Float64Array;
  /** Mid-time field, G. */
  mid: Float64Array;
}

/** Frames at -dt/2 and +dt/2 (s) of `field` carried by `flow`, with the true mid-time velocity. */
export function scenePair(
  field: (x: number, y: number) => number, flow: Flow, nx: number, ny: number, dx: number, dy: number, dtS: number,
): ScenePair {
  const n = nx * ny;
  const at = (t: number) => {
    const m = new Float64Array(n);
    for (let y = 0; y < ny; y++) for (let x = 0; x < nx; x++) {
      const p = flow.back(x, y, t);
      m[y * nx + x] = p.factor * field(p.x, p.y);
    }
    return m;
  };
  // The field at time 0 is field(); frames are at t = -dt/2 and +dt/2, so shift time by dt/2.
  const t0 = Date.UTC(2026, 2, 14, 6, 0, 0);
  const bnA = at(-dtS / 2), bnB = at(dtS / 2);
  const ux = new Float64Array(n), uy = new Float64Array(n), mid = at(0);
  for (let y = 0; y < ny; y++) for (let x = 0; x < nx; x++) {
    const [vx, vy] = flow.velocity(x, y);
    ux[y * nx + x] = vx * dx * KM_PER_MM;
    uy[y * nx + x] = vy * dy * KM_PER_MM;
  }
  const base = { nx, ny, dx, dy };
  return {
    a: { ...base, time: t0, bn: bnA, provenance: { source: 'scene-a' } },
    b: { ...base, time: t0 + dtS * 1000, bn: bnB, provenance: { source: 'scene-b' } },
    ux, uy, mid,
  };
}

/** Speed ratio and direction errors (degrees) at the pixels selected by `use`. */
export function flowErrors(
  vx: ArrayLike<number>, vy: ArrayLike<number>, ux: ArrayLike<number>, uy: ArrayLike<number>, use: (i: number) => boolean,
): { count: number; masked: number; speed: number[]; angle: number[] } {
  const speed: number[] = [], angle: number[] = [];
  let masked = 0;
  for (let i = 0; i < ux.length; i++) {
    if (!use(i)) continue;
    if (!Number.isFinite(vx[i]) || !Number.isFinite(vy[i])) { masked++; continue; }
    const s0 = Math.hypot(ux[i], uy[i]), s1 = Math.hypot(vx[i], vy[i]);
    speed.push(Math.abs(s1 / s0 - 1));
    const dot = (vx[i] * ux[i] + vy[i] * uy[i]) / (s0 * s1);
    angle.push((Math.acos(Math.max(-1, Math.min(1, dot))) * 180) / Math.PI);
  }
  return { count: speed.length, masked, speed, angle };
}

/** The q-quantile (0..1) of a list. */
export function quantile(values: number[], q: number): number {
  const s = [...values].sort((p, r) => p - r);
  return s[Math.min(s.length - 1, Math.floor(q * (s.length - 1)))];
}
