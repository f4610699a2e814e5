// A patch of the sphere two ways: flattened for the planar engine (core/helicityFlux.ts), and on
// the sphere (core/sphere/potentialGradient.ts), and how far apart they are.
//
// Flattening: the native grid in its own orientation (columns toward native east, rows toward
// native north, reordered when CDELT is negative so that x, y, z stay right-handed), with the local
// pixel sides at the centre row: dx = R cos(th_c) |d phi|, dy = R |d th| (CAR) or R |d sin th| /
// cos(th_c) (CEA). Velocities are the native components. That is what the planar engine sees of a
// patch centred on the native equator (an oblique CEA patch, as remapped active-region patches are).
//
// On the sphere the exact sum costs ny^2 zero-padded row transforms; a patch too large for the
// budget is measured on a coarser copy (blocks of f x f pixels: area-weighted B and velocity), and
// the spherical rate is then the planar rate at full resolution plus the curvature correction
// measured on the copy (spherical minus planar, both of the copy). Each answer says which it is.

import { fluxKernelFor } from '../fluxKernel.js';
import type { FluxKernelCache } from '../fluxKernel.js';
import { fluxTransport } from '../fluxTransport.js';
import { helicityFluxTotal } from '../helicityFlux.js';
import { nextPowerOfTwo } from '../fft.js';
import { pixelSpinRate } from './pixelSpin.js';
import type { PotentialGradient } from './potentialGradient.js';
import { potentialGradients } from './potentialGradient.js';
import { rateFromGradient } from './sphericalHelicityFlux.js';
import type { SphericalGrid } from './sphericalGrid.js';
import type { SphericalTransport } from './sphericalTransport.js';

/** The patch as the planar engine takes it: a frame in native orientation with the local pixel sides at the centre. */
export function flattenPatch(grid: SphericalGrid, t: SphericalTransport) {
  const { nx, ny, colLon, rowLat, radiusMm, projection } = grid;
  const flipX = nx > 1 && colLon[1] < colLon[0];
  const flipY = ny > 1 && rowLat[1] < rowLat[0];
  const n = nx * ny;
  const bn = new Float64Array(n), vx = new Float64Array(n), vy = new Float64Array(n);
  for (let r = 0; r < ny; r++) {
    for (let k = 0; k < nx; k++) {
      const src = r * nx + k;
      const dst = (flipY ? ny - 1 - r : r) * nx + (flipX ? nx - 1 - k : k);
      bn[dst] = t.valid[src] ? t.bn[src] : NaN;
      vx[dst] = t.ue[src]; vy[dst] = t.un[src];
    }
  }
  const c = (ny - 1) / 2;
  const thc = ny % 2 === 1 ? rowLat[c] : (rowLat[Math.floor(c)] + rowLat[Math.ceil(c)]) / 2;
  const dphi = nx > 1 ? Math.abs(colLon[1] - colLon[0]) : 0;
  const dx = radiusMm * Math.cos(thc) * dphi;
  const span = ny > 1 ? Math.abs(rowLat[ny - 1] - rowLat[0]) / (ny - 1) : 0;
  const dsin = ny > 1 ? Math.abs(Math.sin(rowLat[ny - 1]) - Math.sin(rowLat[0])) / (ny - 1) : 0;
  const dy = projection === 'CAR' ? radiusMm * span : (radiusMm * dsin) / Math.cos(thc);
  return { time: 0, nx, ny, dx, dy, bn, vx, vy };
}

/** The planar engine's rate of the flattened patch, Mx^2/s. */
export function planarRateOfPatch(grid: SphericalGrid, t: SphericalTransport, cache?: FluxKernelCache): number {
  const f = flattenPatch(grid, t);
  return helicityFluxTotal(fluxKernelFor(f, cache), fluxTransport(f));
}

/** The work of the exact spherical sum for a grid: row pairs times the padded row length. */
export function rowPairWork(nx: number, ny: number): number {
  return ny * ny * nextPowerOfTwo(Math.max(2, 2 * nx - 1));
}

/** A coarser copy of a grid and its transport, by blocks of f x f pixels (remainders left out). */
export function coarsenPatch(grid: SphericalGrid, t: SphericalTransport, f: number): { grid: SphericalGrid; t: SphericalTransport } {
  const nx = Math.floor(grid.nx / f), ny = Math.floor(grid.ny / f);
  const n = nx * ny;
  const colLon = new Float64Array(nx), rowLat = new Float64Array(ny), rowAreaMm2 = new Float64Array(ny);
  for (let k = 0; k < nx; k++) { let s = 0; for (let j = 0; j < f; j++) s += grid.colLon[k * f + j]; colLon[k] = s / f; }
  for (let r = 0; r < ny; r++) {
    // The block's centre latitude: the middle of its sin(lat) range for CEA, of its lat range for CAR.
    const a = grid.rowLat[r * f], b = grid.rowLat[r * f + f - 1];
    rowLat[r] = grid.projection === 'CEA' ? Math.asin((Math.sin(a) + Math.sin(b)) / 2) : (a + b) / 2;
    let s = 0; for (let j = 0; j < f; j++) s += grid.rowAreaMm2[r * f + j];
    rowAreaMm2[r] = s * f;
  }
  const lonDeg = new Float64Array(n), latDeg = new Float64Array(n);
  const turn = grid.nativeTurn ? new Float64Array(n) : undefined;
  const bn = new Float64Array(n), ue = new Float64Array(n), un = new Float64Array(n), valid = new Uint8Array(n);
  let count = 0;
  for (let r = 0; r < ny; r++) {
    for (let k = 0; k < nx; k++) {
      let a = 0, ab = 0, ae = 0, an = 0, lat = 0, tn = 0;
      let lonRef = NaN, lon = 0;
      for (let jr = 0; jr < f; jr++) {
        for (let jk = 0; jk < f; jk++) {
          const i = (r * f + jr) * grid.nx + k * f + jk;
          const w = grid.rowAreaMm2[r * f + jr];
          if (Number.isNaN(lonRef)) lonRef = grid.lonDeg[i];
          let d = grid.lonDeg[i] - lonRef; d -= 360 * Math.round(d / 360);
          lon += d; lat += grid.latDeg[i]; if (turn) tn += grid.nativeTurn![i];
          if (!t.valid[i]) continue;
          a += w; ab += w * t.bn[i]; ae += w * t.ue[i]; an += w * t.un[i];
        }
      }
      const i = r * nx + k;
      lonDeg[i] = (((lonRef + lon / (f * f)) % 360) + 360) % 360; latDeg[i] = lat / (f * f);
      if (turn) turn[i] = tn / (f * f);
      if (a > 0) { bn[i] = ab / a; ue[i] = ae / a; un[i] = an / a; valid[i] = 1; count++; }
    }
  }
  const coarse: SphericalGrid = {
    nx, ny, projection: grid.projection, radiusMm: grid.radiusMm, colLon, rowLat, rowAreaMm2, lonDeg, latDeg,
    wholeSun: grid.wholeSun && nx * f === grid.nx, system: grid.system, ...(turn && { nativeTurn: turn }),
  };
  return { grid: coarse, t: { bn, ue, un, valid, validCount: count, maskedFraction: 1 - count / n } };
}

export interface PatchComparison {
  /** Planar engine at full resolution, Mx^2/s (pixel pairs, as the planar engine sums them). */
  readonly planar: number;
  /** Spherical pixel-pair sum, Mx^2/s: exact, or planar + the correction measured on the coarse copy. */
  readonly sphericalPairs: number;
  /** Each pixel's own spin at full resolution, Mx^2/s (core/sphere/pixelSpin.ts). */
  readonly selfPixel: number;
  /** sphericalPairs + selfPixel. */
  readonly spherical: number;
  /** (planar - spherical pairs) / |spherical pairs|, measured where the spherical sum was made. */
  readonly planarDeparture: number;
  /** Block size of the copy the spherical sum was made on (1 = exact at full resolution). */
  readonly coarsening: number;
}

export interface PatchComparisonOptions {
  /** Most row-pair work (ny^2 times the padded row) for the spherical sum (default 3.5e7, a 360 x 180 map). */
  readonly maxRowPairWork?: number;
  readonly cache?: FluxKernelCache;
  /** grad_s psi of the patch at full resolution when already made (used when the sum is exact). */
  readonly gradient?: PotentialGradient;
}

/** The planar and spherical rates of a patch and their distance (per frame). */
export function comparePatch(grid: SphericalGrid, t: SphericalTransport, options: PatchComparisonOptions = {}): PatchComparison {
  const budget = options.maxRowPairWork ?? 3.5e7;
  const planar = planarRateOfPatch(grid, t, options.cache);
  const none = new Float64Array(grid.nx * grid.ny);
  const selfPixel = rateFromGradient(grid, t, { ge: none, gn: none }, t.ue, t.un, pixelSpinRate(grid, t.ue, t.un, t.valid)).selfPixel;
  let f = 1;
  while (rowPairWork(Math.floor(grid.nx / f), Math.floor(grid.ny / f)) > budget && Math.min(grid.nx, grid.ny) / (f + 1) >= 8) f++;
  // The pair sum does not depend on the pixels' own spin: pass none.
  const noSpin = (g: SphericalGrid) => new Float64Array(g.nx * g.ny);
  if (f === 1) {
    const g = options.gradient ?? potentialGradients(grid, [t.bn])[0];
    const pairs = rateFromGradient(grid, t, g, t.ue, t.un, noSpin(grid)).pairs;
    return { planar, sphericalPairs: pairs, selfPixel, spherical: pairs + selfPixel, planarDeparture: (planar - pairs) / Math.abs(pairs), coarsening: 1 };
  }
  const c = coarsenPatch(grid, t, f);
  const g = potentialGradients(c.grid, [c.t.bn])[0];
  const pairsCoarse = rateFromGradient(c.grid, c.t, g, c.t.ue, c.t.un, noSpin(c.grid)).pairs;
  const planarCoarse = planarRateOfPatch(c.grid, c.t, options.cache);
  const pairs = planar + (pairsCoarse - planarCoarse);
  return {
    planar, sphericalPairs: pairs, selfPixel, spherical: pairs + selfPixel,
    planarDeparture: (planarCoarse - pairsCoarse) / Math.abs(pairsCoarse), coarsening: f,
  };
}
