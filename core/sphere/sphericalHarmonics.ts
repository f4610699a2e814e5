// grad_s psi on a whole-Sun map by spherical harmonics (our own transform): the Green's function
// G(gamma) = ln(1 - cos gamma)/(4 pi) is the series - Sum_l (2l+1)/(4 pi l(l+1)) P_l(cos gamma) + const,
// so psi = Sum_lm -a_lm Y_lm / (l(l+1)) with a_lm = Sum_k B_k dS_k conj(Y_lm(x_k)) (the discrete
// projection of the pixels, exactly the pixel sums with the series cut at degree L), and its
// gradient is synthesised at the pixel centres. Orthonormal associated Legendre functions by the
// standard three-term recurrence, row by row (no tables kept), longitudes by a direct DFT; native
// coordinates of the grid, whose columns must go once round the Sun.
//
// Why beside the exact pair sums (core/sphere/potentialGradient.ts): the derivative along the
// longitude is exact in the series and the projection commutes with a rotation about the axis, so a
// rigid rotation injects nothing into a flux-balanced Sun at every resolution, and for fields smooth
// on the pixel scale the series converges faster than the pair sums (docs/sphere.md gives the
// figures). It does not serve patches, and its kernel near a pixel is the cut series, so no pixel's
// own spin is added to it.

import { CM_PER_MM } from '../units.js';
import type { PotentialGradient } from './potentialGradient.js';
import type { SphericalGrid } from './sphericalGrid.js';

/** Fills p[m * (L + 1) + l] with the orthonormal P_l^m(sin lat) and dp with d/d(lat), for m <= M. */
function legendreRow(lat: number, L: number, M: number, p: Float64Array, dp: Float64Array): void {
  const x = Math.sin(lat), s = Math.cos(lat);
  let pmm = 1 / Math.sqrt(4 * Math.PI);
  for (let m = 0; m <= M; m++) {
    const o = m * (L + 1);
    if (m > 0) pmm *= -Math.sqrt((2 * m + 1) / (2 * m)) * s;
    p[o + m] = pmm;
    if (m + 1 <= L) p[o + m + 1] = Math.sqrt(2 * m + 3) * x * pmm;
    for (let l = m + 2; l <= L; l++) {
      const a = Math.sqrt((4 * l * l - 1) / (l * l - m * m));
      const a1 = Math.sqrt((4 * (l - 1) * (l - 1) - 1) / ((l - 1) * (l - 1) - m * m));
      p[o + l] = a * (x * p[o + l - 1] - p[o + l - 2] / a1);
    }
    // dP_l^m/d(colatitude) = [l x P_l^m - sqrt((2l+1)(l^2-m^2)/(2l-1)) P_{l-1}^m] / sin(colatitude); d/d(lat) is minus it.
    for (let l = m; l <= L; l++) {
      const prev = l - 1 >= m ? p[o + l - 1] : 0;
      dp[o + l] = -(l * x * p[o + l] - Math.sqrt(((2 * l + 1) * (l * l - m * m)) / (2 * l - 1)) * prev) / s;
    }
  }
}

/** The default degree: ny - 1 (one row per degree of latitude resolution). */
export function defaultDegree(grid: SphericalGrid): number {
  return grid.ny - 1;
}

/**
 * grad_s psi (native east and north, G cm) for each source map (B_r in G, 0 where no data) by the
 * series to degree L (default ny - 1). Throws RangeError unless the grid goes once round the Sun.
 */
export function harmonicGradients(grid: SphericalGrid, sources: readonly ArrayLike<number>[], L = defaultDegree(grid)): PotentialGradient[] {
  if (!grid.wholeSun) throw new RangeError('spherical harmonics need a whole-Sun grid (columns once round the Sun)');
  const { nx, ny, colLon, rowLat, rowAreaMm2, radiusMm } = grid;
  const M = Math.min(L, Math.floor(nx / 2));
  const q = sources.length;
  const cosT = new Float64Array(nx * (M + 1)), sinT = new Float64Array(nx * (M + 1));
  for (let m = 0; m <= M; m++) for (let k = 0; k < nx; k++) { cosT[m * nx + k] = Math.cos(m * colLon[k]); sinT[m * nx + k] = Math.sin(m * colLon[k]); }
  const size = (M + 1) * (L + 1);
  const p = new Float64Array(size), dp = new Float64Array(size);
  // Analysis: a_lm = Sum_rows P_lm(row) Sum_k B dS e^{-i m phi}, per source.
  const ar = new Float64Array(q * size), ai = new Float64Array(q * size);
  for (let r = 0; r < ny; r++) {
    legendreRow(rowLat[r], L, M, p, dp);
    for (let j = 0; j < q; j++) {
      const b = sources[j];
      let any = false;
      for (let k = 0; k < nx; k++) if (b[r * nx + k] !== 0) { any = true; break; }
      if (!any) continue;
      for (let m = 0; m <= M; m++) {
        let cr = 0, ci = 0;
        for (let k = 0; k < nx; k++) { const v = b[r * nx + k]; cr += v * cosT[m * nx + k]; ci -= v * sinT[m * nx + k]; }
        cr *= rowAreaMm2[r]; ci *= rowAreaMm2[r];
        const o = j * size + m * (L + 1);
        for (let l = Math.max(m, 1); l <= L; l++) { ar[o + l] += p[m * (L + 1) + l] * cr; ai[o + l] += p[m * (L + 1) + l] * ci; }
      }
    }
  }
  for (let j = 0; j < q; j++) {
    for (let m = 0; m <= M; m++) for (let l = Math.max(m, 1); l <= L; l++) {
      const c = j * size + m * (L + 1) + l, f = -1 / (l * (l + 1));
      ar[c] *= f; ai[c] *= f;
    }
  }
  // Synthesis of d psi / d phi and d psi / d lat at the pixel centres.
  const out = sources.map(() => ({ ge: new Float64Array(nx * ny), gn: new Float64Array(nx * ny) }));
  const scale = CM_PER_MM / radiusMm;
  for (let r = 0; r < ny; r++) {
    legendreRow(rowLat[r], L, M, p, dp);
    const east = scale / Math.cos(rowLat[r]);
    for (let j = 0; j < q; j++) {
      const { ge, gn } = out[j];
      for (let m = 0; m <= M; m++) {
        let pr = 0, pi = 0, qr = 0, qi = 0;
        const o = j * size + m * (L + 1);
        for (let l = Math.max(m, 1); l <= L; l++) {
          const c = m * (L + 1) + l;
          pr += ar[o + l] * p[c]; pi += ai[o + l] * p[c];
          qr += ar[o + l] * dp[c]; qi += ai[o + l] * dp[c];
        }
        if (pr === 0 && pi === 0 && qr === 0 && qi === 0) continue;
        const w = m === 0 ? 1 : 2;
        for (let k = 0; k < nx; k++) {
          const cs = cosT[m * nx + k], sn = sinT[m * nx + k];
          // Re[(i m)(pr + i pi) e^{i m phi}] and Re[(qr + i qi) e^{i m phi}].
          ge[r * nx + k] += w * m * (-pr * sn - pi * cs) * east;
          gn[r * nx + k] += w * (qr * cs - qi * sn) * scale;
        }
      }
    }
  }
  return out;
}
