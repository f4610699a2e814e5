// The 1-sigma of the spherical rate from noise in B_r, by linear propagation (as
// core/rateUncertainty.ts does in the plane). For a fixed velocity the rate is a quadratic form in
// B_r, R = Sum_jk w_jk B_j B_k + Sum_k s_k B_k^2 (pairs with the ordered weight w_jk, and each
// pixel's own spin), so
//
//   dR/dB_k = Sum_j (w_kj + w_jk) B_j + 2 s_k B_k.
//
// On a sphere the ordered weight is not symmetric: Sum_j w_kj B_j comes from A_p at k (the forward
// sum), Sum_j w_jk B_j from the transposed sum (core/sphere/potentialGradient.ts). Independent
// Gaussian noise sigma per pixel gives Var = sigma^2 Sum_k (dR/dB_k)^2 to first order; the second
// order, 2 sigma^4 Sum w^2, is small where the field stands well above the noise and is left out.
// Checked against the scatter of noise realisations (test/core/sphereNoise.test.ts). Noise in the
// velocity is not covered.

import { CM_PER_KM } from '../units.js';
import { pixelSpinRate } from './pixelSpin.js';
import type { PotentialGradient } from './potentialGradient.js';
import { transposedSums } from './potentialGradient.js';
import { rowAreaCm2 } from './sphericalHelicityFlux.js';
import type { SphericalGrid } from './sphericalGrid.js';
import type { SphericalTransport } from './sphericalTransport.js';

/**
 * sigma of the rate (Mx^2/s) for noise `sigmaG` (G per pixel) in B_r, with the gradient of the rate's
 * own B_r (from either engine; the transposed sum is the pair sums', which the series approaches).
 */
export function sphericalRateSigma(grid: SphericalGrid, t: SphericalTransport, gradient: PotentialGradient, sigmaG: number, pixelSpin = true): number {
  if (!(sigmaG > 0)) return 0;
  const { nx, ny, rowAreaMm2 } = grid;
  const n = nx * ny;
  const areas = rowAreaCm2(grid);
  const fe = new Float64Array(n), fn = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    if (!t.valid[i]) continue;
    const a = areas[Math.floor(i / nx)];
    fe[i] = t.bn[i] * a * t.ue[i];
    fn[i] = t.bn[i] * a * t.un[i];
  }
  const back = transposedSums(grid, fe, fn);
  const spin = pixelSpin ? pixelSpinRate(grid, t.ue, t.un, t.valid) : new Float64Array(n);
  let s2 = 0;
  for (let r = 0; r < ny; r++) {
    const a = areas[r], sMm2 = rowAreaMm2[r];
    for (let k = 0; k < nx; k++) {
      const i = r * nx + k;
      if (!t.valid[i]) continue;
      const forward = -2 * (-gradient.gn[i] * t.ue[i] + gradient.ge[i] * t.un[i]) * CM_PER_KM * a;
      const transposed = -2 * CM_PER_KM * sMm2 * back[i];
      const own = -(spin[i] / Math.PI) * t.bn[i] * a * a;
      const d = forward + transposed + own;
      s2 += d * d;
    }
  }
  return sigmaG * Math.sqrt(s2);
}
