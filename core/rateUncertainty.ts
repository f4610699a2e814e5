// The 1-sigma uncertainty of the injection rate from noise in the normal field, by linear
// propagation. For a fixed footpoint velocity u the rate is a quadratic form in Bn,
//   dH/dt = Sum_ij w_ij Bn_i Bn_j,  so  d(dH/dt)/dBn_i = 2 Sum_j w_ij Bn_j = 2 g_i dS,
//   g_i = -(1/2pi) [uy_i P_i - ux_i Q_i - R_i]     (P, Q, R the kernel convolutions),
// and independent Gaussian noise of sigma s per pixel gives Var = s^2 Sum_i (2 g_i dS)^2 to first
// order, plus the second-order term 2 s^4 Sum_ij w_ij^2, which is small wherever the field stands
// well above the noise and is left out. The test checks this against the scatter of 200 noise
// realisations. Noise in an inferred velocity is not covered here.

import type { KernelConvolutions } from './helicityFlux.js';
import { CM_PER_KM, pixelAreaCm2 } from './units.js';

/**
 * sigma of the total rate (Mx^2/s) for noise `sigmaG` (gauss per pixel) in bn, from the
 * convolutions of the rate and the velocity maps (km/s). Pixels with NaN velocity or `valid` 0
 * are left out.
 */
export function rateSigmaFromNoise(
  conv: KernelConvolutions, ux: ArrayLike<number>, uy: ArrayLike<number>, valid: Uint8Array,
  sigmaG: number, dx: number, dy: number,
): number {
  if (!(sigmaG > 0)) return 0;
  const { p, q, r } = conv;
  let s2 = 0;
  for (let i = 0; i < p.length; i++) {
    if (!valid[i]) continue;
    const g = uy[i] * p[i] - ux[i] * q[i] - r[i];
    if (Number.isFinite(g)) s2 += g * g;
  }
  const k = (2 * CM_PER_KM * pixelAreaCm2(dx, dy)) / (2 * Math.PI);
  return sigmaG * k * Math.sqrt(s2);
}
