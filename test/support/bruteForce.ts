// Direct O(N^4) double sums of the helicity-flux formulas, straight from their definitions
// (Pariat, Demoulin & Berger 2005, eqs. for G_theta and G_A), for checking the FFT engine.

import { CM_PER_KM, CM_PER_MM } from '../../core/units.js';

export interface BruteInput {
  nx: number; ny: number; dx: number; dy: number;
  bn: ArrayLike<number>; ux: ArrayLike<number>; uy: ArrayLike<number>;
}

/** G_theta(x) by the direct sum, Mx^2 cm^-2 s^-1, with u in km/s and lengths in Mm. */
export function bruteGTheta(f: BruteInput): Float64Array {
  const { nx, ny, dx, dy, bn, ux, uy } = f;
  const out = new Float64Array(nx * ny);
  const dA = dx * dy * CM_PER_MM * CM_PER_MM;
  for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) {
    const a = j * nx + i;
    let s = 0;
    for (let jj = 0; jj < ny; jj++) for (let ii = 0; ii < nx; ii++) {
      const b = jj * nx + ii;
      if (a === b) continue;
      const X = (i - ii) * dx * CM_PER_MM, Y = (j - jj) * dy * CM_PER_MM;
      const dux = (ux[a] - ux[b]) * CM_PER_KM, duy = (uy[a] - uy[b]) * CM_PER_KM;
      s += ((X * duy - Y * dux) / (X * X + Y * Y)) * bn[b] * dA;
    }
    out[a] = (-bn[a] / (2 * Math.PI)) * s;
  }
  return out;
}

/** A_p(x) by the direct sum, G cm. */
export function bruteAp(f: BruteInput): { ax: Float64Array; ay: Float64Array } {
  const { nx, ny, dx, dy, bn } = f;
  const ax = new Float64Array(nx * ny), ay = new Float64Array(nx * ny);
  const dA = dx * dy * CM_PER_MM * CM_PER_MM;
  for (let j = 0; j < ny; j++) for (let i = 0; i < nx; i++) {
    const a = j * nx + i;
    let sx = 0, sy = 0;
    for (let jj = 0; jj < ny; jj++) for (let ii = 0; ii < nx; ii++) {
      const b = jj * nx + ii;
      if (a === b) continue;
      const X = (i - ii) * dx * CM_PER_MM, Y = (j - jj) * dy * CM_PER_MM;
      const r2 = X * X + Y * Y;
      sx += (bn[b] * X * dA) / r2;
      sy += (bn[b] * Y * dA) / r2;
    }
    // z x (sx, sy) = (-sy, sx)
    ax[a] = -sy / (2 * Math.PI);
    ay[a] = sx / (2 * Math.PI);
  }
  return { ax, ay };
}

/** Sum of a density map times the pixel area, Mx^2/s. */
export function integrate(map: ArrayLike<number>, dx: number, dy: number): number {
  let s = 0;
  for (let i = 0; i < map.length; i++) s += map[i];
  return s * dx * dy * CM_PER_MM * CM_PER_MM;
}
