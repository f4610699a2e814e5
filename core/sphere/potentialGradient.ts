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

interface RowPairPlan {
  readonly p: number;
  readonly h: number;
  readonly plan: ReturnType<typeof createRealFftPlan>;
  /** Scale from the convolution of B (G) times row areas (Mm^2) to grad psi in G cm. */
  readonly scale: number;
}

function rowPairPlan(grid: SphericalGrid): RowPairPlan {
  const p = nextPowerOfTwo(Math.max(2, 2 * grid.nx - 1));
  return { p, h: p / 2 + 1, plan: createRealFftPlan(p), scale: CM_PER_MM / (4 * Math.PI * grid.radiusMm) };
}

/**
 * Visits every row pair (target r, source s) with a source row that `wanted(s)`, giving the
 * half spectrum of g_N + g_E along the row: real part the spectrum of g_N, imaginary part that of
 * g_E, with g_N to be taken times `northSign`. When the rows are symmetric about the equator the
 * pair mirrored in it has the same g_E and the opposite g_N: one transform serves both.
 */
function forEachRowPair(
  grid: SphericalGrid, rp: RowPairPlan, wanted: (s: number) => boolean,
  visit: (r: number, s: number, kr: Float64Array, ki: Float64Array, northSign: 1 | -1) => void,
): void {
  const { nx, ny, colLon, rowLat } = grid;
  const { p, h, plan } = rp;
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
  const kernel = new Float64Array(p);
  const kr = new Float64Array(h), ki = new Float64Array(h);
  const sinT = rowLat.map(Math.sin), cosT = rowLat.map(Math.cos);
  let symmetric = true;
  for (let r = 0; r < ny; r++) if (Math.abs(rowLat[r] + rowLat[ny - 1 - r]) > 1e-14) symmetric = false;
  const done = new Uint8Array(ny * ny);
  for (let r = 0; r < ny; r++) {
    for (let s = 0; s < ny; s++) {
      if (done[r * ny + s]) continue;
      const mr = ny - 1 - r, ms = ny - 1 - s;
      const mirror = symmetric && (mr !== r || ms !== s) && wanted(ms);
      if (!wanted(s) && !mirror) continue;
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
      if (wanted(s)) visit(r, s, kr, ki, 1);
      if (mirror) { visit(mr, ms, kr, ki, -1); done[mr * ny + ms] = 1; }
    }
  }
}

/** Half spectra of the rows of a map times the row areas (zero rows flagged). */
function rowSpectra(grid: SphericalGrid, rp: RowPairPlan, map: ArrayLike<number>, weight: (r: number) => number) {
  const { nx, ny } = grid;
  const { h, plan } = rp;
  const re = new Float64Array(ny * h), im = new Float64Array(ny * h), any = new Uint8Array(ny);
  const row = new Float64Array(nx);
  for (let s = 0; s < ny; s++) {
    let nonzero = false;
    const w = weight(s);
    for (let k = 0; k < nx; k++) { row[k] = map[s * nx + k] * w; if (row[k] !== 0) nonzero = true; }
    if (!nonzero) continue;
    any[s] = 1;
    realFftRow(plan, row, 0, nx, re, im, s * h);
  }
  return { re, im, any };
}

/**
 * grad_s psi at every pixel for each source map (B_r in G, 0 where there is no data), all sharing
 * one pass over the row pairs.
 */
export function potentialGradients(grid: SphericalGrid, sources: readonly ArrayLike<number>[]): PotentialGradient[] {
  const { nx, ny, rowAreaMm2 } = grid;
  const q = sources.length;
  const rp = rowPairPlan(grid);
  const { h, plan, scale } = rp;
  const spectra = sources.map((b) => rowSpectra(grid, rp, b, (s) => rowAreaMm2[s]));
  // Spectra of the result, per source map and target row: east and north.
  const er = new Float64Array(q * ny * h), ei = new Float64Array(q * ny * h);
  const nr = new Float64Array(q * ny * h), ni = new Float64Array(q * ny * h);
  const out = sources.map(() => ({ ge: new Float64Array(nx * ny), gn: new Float64Array(nx * ny) }));
  const anySource = (s: number) => spectra.some((x) => x.any[s] === 1);
  forEachRowPair(grid, rp, anySource, (r, s, kr, ki, sign) => {
    for (let m = 0; m < q; m++) {
      const sp = spectra[m];
      if (!sp.any[s]) continue;
      const o = s * h, w = (m * ny + r) * h;
      for (let f = 0; f < h; f++) {
        const br = sp.re[o + f], bi = sp.im[o + f], kn = sign * kr[f], ke = ki[f];
        // East: B^ times i Im(K^); north: B^ times Re(K^).
        er[w + f] -= bi * ke; ei[w + f] += br * ke;
        nr[w + f] += br * kn; ni[w + f] += bi * kn;
      }
    }
  });
  for (let m = 0; m < q; m++) {
    for (let r = 0; r < ny; r++) {
      realInverseFftRow(plan, er, ei, (m * ny + r) * h, out[m].ge, r * nx, nx, scale);
      realInverseFftRow(plan, nr, ni, (m * ny + r) * h, out[m].gn, r * nx, nx, scale);
    }
  }
  return out;
}

/**
 * The transposed sum: for every pixel k, Sum_j [F_N(j) g_E(j <- k) - F_E(j) g_N(j <- k)] with
 * F = B u dS at the target pixels j (G km/s Mm^2, native components) and g(j <- k) the gradient at
 * j of a unit source at k (the same kernels as potentialGradients, read the other way round),
 * G km/s cm (with the 1/(4 pi R) and Mm -> cm of the forward sum). This is how the rate changes
 * with B at the sources, which the forward sum alone does not give on a sphere (the ordered pair
 * weight is not symmetric).
 */
export function transposedSums(grid: SphericalGrid, fe: ArrayLike<number>, fn: ArrayLike<number>): Float64Array {
  const { nx, ny } = grid;
  const rp = rowPairPlan(grid);
  const { h, plan, scale } = rp;
  const se = rowSpectra(grid, rp, fe, () => 1), sn = rowSpectra(grid, rp, fn, () => 1);
  const yr = new Float64Array(ny * h), yi = new Float64Array(ny * h);
  // Reading the kernel the other way round reverses the longitude difference: the spectrum's conjugate.
  forEachRowPair(grid, rp, () => true, (r, s, kr, ki, sign) => {
    if (!se.any[r] && !sn.any[r]) return;
    const o = r * h, w = s * h;
    for (let f = 0; f < h; f++) {
      const ner = sn.re[o + f], nei = sn.im[o + f], eer = se.re[o + f], eei = se.im[o + f];
      const kn = sign * kr[f], ke = ki[f];
      // F_N^ times (-i Im K^) minus F_E^ times Re K^.
      yr[w + f] += nei * ke - eer * kn;
      yi[w + f] += -ner * ke - eei * kn;
    }
  });
  const out = new Float64Array(nx * ny);
  for (let s = 0; s < ny; s++) realInverseFftRow(plan, yr, yi, s * h, out, s * nx, nx, scale);
  return out;
}
