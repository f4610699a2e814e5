// The surface gradient of the potential psi(x) = Int G(gamma) B_r(x') dS' on a sphere of radius R,
// with G(gamma) = ln(1 - cos gamma) / (4 pi): the Green's function of the surface Laplacian for a
// point source minus a uniform spread of the same flux over the sphere (so that Lap_s psi = B_r -
// mean B_r). Its gradient at x from a source at x' (unit vectors x^, x'^) is
//
//   grad_s G = (1 / (4 pi R)) (x^ cos gamma - x'^) / (1 - cos gamma),
//
// which tends to the planar (1/2pi) (x - x') / |x - x'|^2 at small angles. In the native coordinates
// of a CAR/CEA grid (rows on parallels theta_r, columns evenly spaced in longitude) the east and north
// components from row s to row r depend on the longitude difference alone:
//
//   g_E = -cos th_s sin D / (1 - cos gamma),
//   g_N = (sin(th_r - th_s) - 2 sin th_r cos th_s sin^2(D/2)) / (1 - cos gamma),
//   1 - cos gamma = 2 sin^2((th_r - th_s)/2) + 2 cos th_r cos th_s sin^2(D/2)   (no cancellation),
//
// so each row pair is one linear convolution along the row, done by zero-padded real FFTs (length a
// power of two >= 2 nx - 1; the longitude difference is the true angle, so a whole-Sun row, where it
// wraps, comes out right with no special case). g_E is odd and g_N even in D: one real transform of
// g_N + g_E gives both spectra (real part, imaginary part). The sum is over every pixel pair but the
// pixel with itself, as the planar engine (core/fluxKernel.ts); it is exact, not a truncated series.
// Cost: ny^2 kernel transforms plus ny^2 (nx_padded / 2) complex products per source map.

import { createRealFftPlan, nextPowerOfTwo, realFftRow, realInverseFftRow } from '../fft.js';
import { CM_PER_MM } from '../units.js';
import type { SphericalGrid } from './sphericalGrid.js';

export interface PotentialGradient {
  /** Native east and north components of grad_s psi, G cm (psi of B in G over areas in cm^2). */
  readonly ge: Float64Array;
  readonly gn: Float64Array;
}

/**
 * grad_s psi at every pixel for each source map (B_r in G, 0 where there is no data), all sharing
 * one pass over the row pairs.
 */
export function potentialGradients(grid: SphericalGrid, sources: readonly ArrayLike<number>[]): PotentialGradient[] {
  const { nx, ny, colLon, rowLat, rowAreaMm2, radiusMm } = grid;
  const q = sources.length;
  const p = nextPowerOfTwo(Math.max(2, 2 * nx - 1));
  const h = p / 2 + 1;
  const plan = createRealFftPlan(p);
  const step = nx > 1 ? colLon[1] - colLon[0] : 0;
  // Kernel index d (target column minus source column) holds the source at angle D = -d step.
  const sinD = new Float64Array(p), half2 = new Float64Array(p);
  const used = new Uint8Array(p);
  for (let d = -(nx - 1); d <= nx - 1; d++) {
    const a = -d * step;
    const j = (d + p) % p;
    sinD[j] = Math.sin(a);
    half2[j] = 2 * Math.sin(a / 2) ** 2;
    used[j] = 1;
  }
  // Spectra of every source row (times its pixel area), per source map.
  const sr = new Float64Array(q * ny * h), si = new Float64Array(q * ny * h);
  const row = new Float64Array(nx);
  const rowHasFlux = new Uint8Array(q * ny);
  for (let m = 0; m < q; m++) {
    const b = sources[m];
    for (let s = 0; s < ny; s++) {
      let any = false;
      for (let k = 0; k < nx; k++) { row[k] = b[s * nx + k] * rowAreaMm2[s]; if (row[k] !== 0) any = true; }
      if (!any) continue;
      rowHasFlux[m * ny + s] = 1;
      realFftRow(plan, row, 0, nx, sr, si, (m * ny + s) * h);
    }
  }
  const kernel = new Float64Array(p);
  const kr = new Float64Array(h), ki = new Float64Array(h);
  const er = new Float64Array(q * h), ei = new Float64Array(q * h);
  const nr = new Float64Array(q * h), ni = new Float64Array(q * h);
  const out = sources.map(() => ({ ge: new Float64Array(nx * ny), gn: new Float64Array(nx * ny) }));
  const sinT = rowLat.map(Math.sin), cosT = rowLat.map(Math.cos);
  const scale = CM_PER_MM / (4 * Math.PI * radiusMm); // area Mm^2 / R Mm -> Mm, to cm
  const anySourceRow = new Uint8Array(ny);
  for (let m = 0; m < q; m++) for (let s = 0; s < ny; s++) if (rowHasFlux[m * ny + s]) anySourceRow[s] = 1;
  for (let r = 0; r < ny; r++) {
    er.fill(0); ei.fill(0); nr.fill(0); ni.fill(0);
    for (let s = 0; s < ny; s++) {
      if (!anySourceRow[s]) continue;
      const dt = rowLat[r] - rowLat[s];
      const a = 2 * Math.sin(dt / 2) ** 2, c = cosT[r] * cosT[s], sdt = Math.sin(dt);
      const e = -cosT[s], nn = sinT[r] * cosT[s];
      kernel.fill(0);
      for (let j = 0; j < p; j++) {
        if (!used[j]) continue;
        const den = a + c * half2[j];
        if (den === 0) continue; // the pixel itself
        kernel[j] = (e * sinD[j] + sdt - nn * half2[j]) / den;
      }
      realFftRow(plan, kernel, 0, p, kr, ki, 0);
      for (let m = 0; m < q; m++) {
        if (!rowHasFlux[m * ny + s]) continue;
        const o = (m * ny + s) * h, w = m * h;
        for (let f = 0; f < h; f++) {
          const br = sr[o + f], bi = si[o + f], kn = kr[f], ke = ki[f];
          // East: B^ times i Im(K^); north: B^ times Re(K^).
          er[w + f] -= bi * ke; ei[w + f] += br * ke;
          nr[w + f] += br * kn; ni[w + f] += bi * kn;
        }
      }
    }
    for (let m = 0; m < q; m++) {
      realInverseFftRow(plan, er, ei, m * h, out[m].ge, r * nx, nx, scale);
      realInverseFftRow(plan, nr, ni, m * h, out[m].gn, r * nx, nx, scale);
    }
  }
  return out;
}
