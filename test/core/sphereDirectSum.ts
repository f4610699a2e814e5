// A direct O(N^2) sum of the spherical potential gradient, pixel pair by pixel pair in 3-D vectors
// (grad_s G = (x cos g - x') / (4 pi R (1 - cos g))), for tests on coarse grids: an independent
// path beside core/sphere/potentialGradient.ts's row-pair convolutions.
import type { SphericalGrid } from '../../core/sphere/sphericalGrid.js';

export function directGradient(grid: SphericalGrid, b: ArrayLike<number>): { ge: Float64Array; gn: Float64Array } {
  const { nx, ny, colLon, rowLat, rowAreaMm2, radiusMm } = grid;
  const n = nx * ny;
  const X = new Float64Array(n), Y = new Float64Array(n), Z = new Float64Array(n);
  for (let r = 0; r < ny; r++) for (let k = 0; k < nx; k++) {
    const i = r * nx + k;
    X[i] = Math.cos(rowLat[r]) * Math.cos(colLon[k]);
    Y[i] = Math.cos(rowLat[r]) * Math.sin(colLon[k]);
    Z[i] = Math.sin(rowLat[r]);
  }
  const ge = new Float64Array(n), gn = new Float64Array(n);
  const c = 1e8 / (4 * Math.PI * radiusMm);
  for (let i = 0; i < n; i++) {
    const r = Math.floor(i / nx), k = i % nx;
    const eE = [-Math.sin(colLon[k]), Math.cos(colLon[k]), 0];
    const eN = [-Math.sin(rowLat[r]) * Math.cos(colLon[k]), -Math.sin(rowLat[r]) * Math.sin(colLon[k]), Math.cos(rowLat[r])];
    let sx = 0, sy = 0, sz = 0;
    for (let j = 0; j < n; j++) {
      if (j === i || b[j] === 0) continue;
      const cg = X[i] * X[j] + Y[i] * Y[j] + Z[i] * Z[j];
      const w = (b[j] * rowAreaMm2[Math.floor(j / nx)]) / (1 - cg);
      sx += w * (X[i] * cg - X[j]); sy += w * (Y[i] * cg - Y[j]); sz += w * (Z[i] * cg - Z[j]);
    }
    ge[i] = c * (sx * eE[0] + sy * eE[1] + sz * eE[2]);
    gn[i] = c * (sx * eN[0] + sy * eN[1] + sz * eN[2]);
  }
  return { ge, gn };
}

/**
 * The transposed sum Sum_j [F_N(j) g_E(j <- k) - F_E(j) g_N(j <- k)] at every pixel k, pair by
 * pair (g(j <- k): gradient at j of a unit source at k, per Mm^2 of source, in cm^-1 units as directGradient).
 */
export function directTransposed(grid: SphericalGrid, fe: ArrayLike<number>, fn: ArrayLike<number>): Float64Array {
  const { nx, ny, colLon, rowLat, radiusMm } = grid;
  const n = nx * ny;
  const out = new Float64Array(n);
  const c = 1e8 / (4 * Math.PI * radiusMm);
  const x = (i: number) => {
    const r = Math.floor(i / nx), k = i % nx;
    return [Math.cos(rowLat[r]) * Math.cos(colLon[k]), Math.cos(rowLat[r]) * Math.sin(colLon[k]), Math.sin(rowLat[r])];
  };
  for (let k = 0; k < n; k++) {
    const xk = x(k);
    let s = 0;
    for (let j = 0; j < n; j++) {
      if (j === k || (fe[j] === 0 && fn[j] === 0)) continue;
      const xj = x(j);
      const r = Math.floor(j / nx), q = j % nx;
      const cg = xj[0] * xk[0] + xj[1] * xk[1] + xj[2] * xk[2];
      const eE = [-Math.sin(colLon[q]), Math.cos(colLon[q]), 0];
      const eN = [-Math.sin(rowLat[r]) * Math.cos(colLon[q]), -Math.sin(rowLat[r]) * Math.sin(colLon[q]), Math.cos(rowLat[r])];
      const g = [xj[0] * cg - xk[0], xj[1] * cg - xk[1], xj[2] * cg - xk[2]].map((v) => v / (1 - cg));
      const gE = g[0] * eE[0] + g[1] * eE[1] + g[2] * eE[2], gN = g[0] * eN[0] + g[1] * eN[1] + g[2] * eN[2];
      s += fn[j] * gE - fe[j] * gN;
    }
    out[k] = c * s;
  }
  return out;
}
