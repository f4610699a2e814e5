// The point-footpoint estimate of spin and orbit from tracking alone (Longcope, Ravindra &
// Barnes 2007): every footpoint is a point of flux Phi at its centroid, turning at omega.
//
//   orbit ~ -(1/2pi) Sum_{a != b} Phi_a Phi_b dtheta_ab/dt,  dtheta_ab/dt = [(c_a - c_b) x (v_a - v_b)]_z / |c_a - c_b|^2
//   spin  ~ -(1/2pi) Sum_a Phi_a^2 omega_a

import { CM_PER_KM, CM_PER_MM } from './units.js';

export interface PointFootpoint {
  readonly id: number;
  /** Signed flux, Mx. */
  readonly flux: number;
  /** Flux-weighted centroid, Mm. */
  readonly x: number;
  readonly y: number;
  /** Centroid velocity, km/s. */
  readonly vx: number;
  readonly vy: number;
  /** Rotation rate, rad/s, counter-clockwise seen from the corona; NaN when not measurable. */
  readonly omega: number;
}

export interface PointEstimate {
  readonly ids: readonly number[];
  /** Spin per footpoint, Mx^2/s (0 where omega is NaN). */
  readonly spin: Float64Array;
  /** Orbit per unordered pair, Mx^2/s: row-major K*K, symmetric, zero diagonal; a pair is counted once in the sum over a < b. */
  readonly orbit: Float64Array;
  readonly spinTotal: number;
  readonly orbitTotal: number;
  /** Footpoints whose rotation was not measurable (their spin is left out, not guessed). */
  readonly spinUnknown: readonly number[];
}

/** Rate of change of the angle of c_b - c_a, rad/s, from centroids (Mm) and velocities (km/s). */
export function pairAngularRate(a: PointFootpoint, b: PointFootpoint): number {
  const X = a.x - b.x, Y = a.y - b.y;
  const r2 = X * X + Y * Y;
  if (r2 === 0) return 0;
  const dvx = a.vx - b.vx, dvy = a.vy - b.vy;
  return ((X * dvy - Y * dvx) / r2) * (CM_PER_KM / CM_PER_MM);
}

export function pointFootpointEstimate(footpoints: readonly PointFootpoint[]): PointEstimate {
  const k = footpoints.length;
  const spin = new Float64Array(k);
  const orbit = new Float64Array(k * k);
  const spinUnknown: number[] = [];
  let spinTotal = 0, orbitTotal = 0;
  for (let a = 0; a < k; a++) {
    const fa = footpoints[a];
    if (Number.isFinite(fa.omega)) {
      spin[a] = (-1 / (2 * Math.PI)) * fa.flux * fa.flux * fa.omega;
      spinTotal += spin[a];
    } else {
      spinUnknown.push(fa.id);
    }
    for (let b = a + 1; b < k; b++) {
      const fb = footpoints[b];
      // Both orders of the pair: -(1/2pi) * 2 * Phi_a Phi_b dtheta/dt.
      const v = (-1 / Math.PI) * fa.flux * fb.flux * pairAngularRate(fa, fb);
      orbit[a * k + b] = v;
      orbit[b * k + a] = v;
      orbitTotal += v;
    }
  }
  return { ids: footpoints.map((f) => f.id), spin, orbit, spinTotal, orbitTotal, spinUnknown };
}
