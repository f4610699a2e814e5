// Maps of a scene at any time and its true injection.
//
// The truth is the engine's own G_theta total (core/helicityFlux.ts, Berger & Field 1984; Pariat,
// Demoulin & Berger 2005) of the TRUE flux transport on the noise-free field at that time:
// F = Sum_k F_k over the objects (each object's Bn u of its own motion, or Bn v_t - v_n B_t for a
// vector object). Nothing divides by Bn. The spin of object k is the total of its own transport
// alone (its field and its F_k, the pairs inside it); the orbit is the rest, total - Sum_k spin_k.
// With vector objects, emergence and shear come from core/emergenceShear.ts applied to each
// object with its own v_n, v_t and B_t and the A_p of the whole field (the two terms are linear
// in the object's transport, so they add up over objects).
//
// Beside it, where the scene says the case has one, the analytic value of the point-footpoint
// formula -(1/2pi) [Sum_{a != b} Phi_a Phi_b dtheta_ab/dt + Sum_a Phi_a^2 omega_a] with the
// objects' fluxes summed on the grid: rigid rotation gives -(Omega/2pi) Phi_net^2, a spinning spot
// -(omega/2pi) Phi^2, a circling pair -(1/pi) Phi1 Phi2 Omega (compact spots).

import { emergenceShear } from '../../core/emergenceShear.js';
import type { FluxKernelCache } from '../../core/fluxKernel.js';
import { fluxKernelFor } from '../../core/fluxKernel.js';
import type { FluxTransport } from '../../core/fluxTransport.js';
import type { Frame } from '../../core/frame.js';
import { convolveTransport, helicityFluxFromConvolutions } from '../../core/helicityFlux.js';
import { KM_PER_MM, pixelFluxMx } from '../../core/units.js';
import type { ObjectValue } from './objects.js';
import { RAD_S_PER_DEG_H } from './objects.js';
import type { Scene } from './scenes.js';

export interface ObjectMaps {
  readonly bn: Float64Array; readonly bx: Float64Array; readonly by: Float64Array;
  readonly fx: Float64Array; readonly fy: Float64Array;
  readonly vtx: Float64Array; readonly vty: Float64Array; readonly vn: Float64Array;
}

export interface SceneMaps {
  /** Scene time, s (0 = middle of the sequence). */
  readonly t: number;
  readonly bn: Float64Array;
  /** Horizontal field (vector scenes only). */
  readonly bx?: Float64Array;
  readonly by?: Float64Array;
  /** True flux transport F = Sum_k F_k, G km/s. */
  readonly fx: Float64Array;
  readonly fy: Float64Array;
  readonly objects: readonly ObjectMaps[];
}

/** The scene's maps at scene time t (s), exact at every pixel centre. */
export function sceneMaps(scene: Scene, t: number): SceneMaps {
  const { nx, ny, dx } = scene.grid;
  const n = nx * ny;
  const total = { bn: new Float64Array(n), bx: new Float64Array(n), by: new Float64Array(n), fx: new Float64Array(n), fy: new Float64Array(n) };
  const v: ObjectValue = { bn: 0, bx: 0, by: 0, fx: 0, fy: 0, vtx: 0, vty: 0, vn: 0 };
  const objects = scene.objects.map((o) => {
    const m: ObjectMaps = {
      bn: new Float64Array(n), bx: new Float64Array(n), by: new Float64Array(n), fx: new Float64Array(n), fy: new Float64Array(n),
      vtx: new Float64Array(n), vty: new Float64Array(n), vn: new Float64Array(n),
    };
    for (let iy = 0; iy < ny; iy++) for (let ix = 0; ix < nx; ix++) {
      const i = iy * nx + ix;
      o.at(ix, iy, t, dx, v);
      m.bn[i] = v.bn; m.bx[i] = v.bx; m.by[i] = v.by; m.fx[i] = v.fx; m.fy[i] = v.fy;
      m.vtx[i] = v.vtx; m.vty[i] = v.vty; m.vn[i] = v.vn;
      total.bn[i] += v.bn; total.bx[i] += v.bx; total.by[i] += v.by; total.fx[i] += v.fx; total.fy[i] += v.fy;
    }
    return m;
  });
  return {
    t, bn: total.bn, fx: total.fx, fy: total.fy, objects,
    ...(scene.vector && { bx: total.bx, by: total.by }),
  };
}

/** A FluxTransport of given maps: every pixel valid (the truth has no missing data). */
export function exactTransport(bn: Float64Array, fx: Float64Array, fy: Float64Array, fromVectorData: boolean): FluxTransport {
  return { bn, fx, fy, valid: new Uint8Array(bn.length).fill(1), validCount: bn.length, maskedFraction: 0, fromVectorData };
}

export interface Truth {
  /** Scene time, s. */
  readonly t: number;
  /** Rates, Mx^2/s. */
  readonly total: number;
  readonly totalGa: number;
  readonly spin: number;
  readonly orbit: number;
  /** Spin of each object by name. */
  readonly spins: Readonly<Record<string, number>>;
  readonly emergence?: number;
  readonly shear?: number;
  /** The analytic value of the scene's case (undefined when it has none). */
  readonly analytic?: number;
  /** Unsigned flux on the grid, Mx; flux of each object on the grid, Mx. */
  readonly unsignedFlux: number;
  readonly fluxes: Readonly<Record<string, number>>;
  /**
   * The size against which errors of a component whose truth is near 0 are measured, Mx^2/s:
   * the largest of |total|, |orbit|, Sum |spin_k| (|emergence|, |shear|), and the reference
   * rate (Phi/2)^2 Omega_ref / pi of the scene's unsigned flux split into two halves circling at
   * Omega_ref = 1 deg/h.
   */
  readonly scale: number;
  /** That reference rate alone. */
  readonly referenceRate: number;
}

function total(scene: Scene, bn: Float64Array, fx: Float64Array, fy: Float64Array, cache: FluxKernelCache) {
  const kernel = fluxKernelFor(scene.grid, cache);
  const tr = exactTransport(bn, fx, fy, scene.vector);
  return helicityFluxFromConvolutions(kernel, tr, convolveTransport(kernel, tr));
}

/** The truth at scene time t (s). */
export function truthAt(scene: Scene, t: number, cache: FluxKernelCache, maps = sceneMaps(scene, t)): Truth {
  const { nx, ny, dx, dy } = scene.grid;
  const whole = total(scene, maps.bn, maps.fx, maps.fy, cache);
  const spins: Record<string, number> = {};
  const fluxes: Record<string, number> = {};
  let spin = 0, emergence = 0, shear = 0;
  scene.objects.forEach((o, k) => {
    const m = maps.objects[k];
    let moving = false;
    let flux = 0;
    for (let i = 0; i < m.bn.length; i++) {
      flux += m.bn[i];
      if (m.fx[i] !== 0 || m.fy[i] !== 0) moving = true;
    }
    fluxes[o.name] = pixelFluxMx(flux, dx, dy);
    const s = moving ? total(scene, m.bn, m.fx, m.fy, cache).total : 0;
    spins[o.name] = s;
    spin += s;
    if (scene.vector) {
      const frame: Frame = { time: 0, nx, ny, dx, dy, bn: m.bn, bx: m.bx, by: m.by, vx: m.vtx, vy: m.vty, vz: m.vn };
      const es = emergenceShear(frame, whole.apx, whole.apy)!;
      emergence += es.emergence;
      shear += es.shear;
    }
  });
  let unsigned = 0;
  for (const b of maps.bn) unsigned += Math.abs(b);
  const unsignedFlux = pixelFluxMx(unsigned, dx, dy);
  const referenceRate = ((unsignedFlux / 2) ** 2 * RAD_S_PER_DEG_H) / Math.PI;
  const orbit = whole.total - spin;
  const sizes = [Math.abs(whole.total), Math.abs(orbit), Object.values(spins).reduce((s, v) => s + Math.abs(v), 0), referenceRate];
  if (scene.vector) sizes.push(Math.abs(emergence), Math.abs(shear));
  return {
    t, total: whole.total, totalGa: whole.totalGa, spin, orbit, spins,
    ...(scene.vector && { emergence, shear }),
    ...(scene.analytic && { analytic: pointFormula(scene, t, fluxes) }),
    unsignedFlux, fluxes, scale: Math.max(...sizes), referenceRate,
  };
}

/**
 * -(1/2pi) [Sum_{a != b} Phi_a Phi_b dtheta_ab/dt + Sum_a Phi_a^2 omega_a], Mx^2/s, with theta_ab
 * the angle of centre b - a and omega_a the rotation rate of object a's pattern.
 */
export function pointFormula(scene: Scene, t: number, fluxes: Readonly<Record<string, number>>): number {
  const { dx } = scene.grid;
  const m = scene.objects.map((o) => o.motion(t, dx));
  let s = 0;
  for (let a = 0; a < m.length; a++) {
    const pa = fluxes[scene.objects[a].name];
    s += pa * pa * m[a].omega;
    for (let b = 0; b < m.length; b++) {
      if (a === b) continue;
      const X = (m[b].x - m[a].x) * dx, Y = (m[b].y - m[a].y) * dx; // Mm
      const U = (m[b].vx - m[a].vx) / KM_PER_MM, V = (m[b].vy - m[a].vy) / KM_PER_MM; // Mm/s
      s += pa * fluxes[scene.objects[b].name] * ((X * V - Y * U) / (X * X + Y * Y));
    }
  }
  return (-1 / (2 * Math.PI)) * s;
}
