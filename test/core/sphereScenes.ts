// Invented scenes on the sphere for the tests: Gaussian spots in angular distance, whole-Sun or
// patch grids in CAR/CEA keywords. Test input, not the Sun.
import type { SphericalGrid } from '../../core/sphere/sphericalGrid.js';
import { sphericalGrid } from '../../core/sphere/sphericalGrid.js';

export interface SphereSpot {
  readonly lonDeg: number;
  readonly latDeg: number;
  /** Peak field, G. */
  readonly peak: number;
  /** Angular width (sigma), degrees. */
  readonly sigmaDeg: number;
  /** Footpoint label (default none). */
  readonly label?: number;
  /** Turning rate about its own centre, rad/s (counter-clockwise seen from the corona). */
  readonly omega?: number;
}

/** A whole-Sun grid: CRLN/CRLT, nx = 2 ny columns, CAR or CEA. */
export function wholeSunGrid(ny: number, projection: 'CAR' | 'CEA' = 'CAR'): SphericalGrid {
  const nx = 2 * ny;
  return sphericalGrid({
    CTYPE1: `CRLN-${projection}`, CTYPE2: `CRLT-${projection}`, CUNIT1: 'deg', CUNIT2: 'deg',
    CRPIX1: (nx + 1) / 2, CRPIX2: (ny + 1) / 2, CRVAL1: 180, CRVAL2: 0,
    CDELT1: 360 / nx, CDELT2: projection === 'CAR' ? 180 / ny : 360 / Math.PI / ny,
  }, nx, ny, 'scene');
}

/** A square CEA or CAR patch of `sizeDeg` centred at (lonDeg, latDeg) with n x n pixels. */
export function patchGrid(lonDeg: number, latDeg: number, sizeDeg: number, n: number, projection: 'CAR' | 'CEA' = 'CEA', oblique = true): SphericalGrid {
  const d = sizeDeg / n;
  return sphericalGrid({
    CTYPE1: `CRLN-${projection}`, CTYPE2: `CRLT-${projection}`, CUNIT1: 'deg', CUNIT2: 'deg',
    CRPIX1: (n + 1) / 2, CRPIX2: oblique ? (n + 1) / 2 : (n + 1) / 2 - latDeg / d,
    CRVAL1: lonDeg, CRVAL2: oblique ? latDeg : 0, CDELT1: d, CDELT2: d,
  }, n, n, 'scene');
}

const D2R = Math.PI / 180;

/** Angle between two points, radians. */
export function angleBetween(lon1: number, lat1: number, lon2: number, lat2: number): number {
  const a = Math.sin(lat1 * D2R) * Math.sin(lat2 * D2R) + Math.cos(lat1 * D2R) * Math.cos(lat2 * D2R) * Math.cos((lon1 - lon2) * D2R);
  return Math.acos(Math.max(-1, Math.min(1, a)));
}

/**
 * B_r of the spots, their labels (the spot within 3 sigma whose term is largest), and the velocity
 * of each spot's own turning (vx east, vy north, km/s), on `grid`. With `balance` the area-weighted
 * mean is taken out so that the net flux is zero.
 */
export function spotScene(grid: SphericalGrid, spots: readonly SphereSpot[], balance = false) {
  const n = grid.nx * grid.ny;
  const bn = new Float64Array(n), vx = new Float64Array(n), vy = new Float64Array(n);
  const labels = new Int32Array(n);
  const best = new Float64Array(n);
  const rKm = grid.radiusMm * 1e3;
  for (let i = 0; i < n; i++) {
    for (const s of spots) {
      const g = angleBetween(grid.lonDeg[i], grid.latDeg[i], s.lonDeg, s.latDeg);
      const term = s.peak * Math.exp(-0.5 * (g / (s.sigmaDeg * D2R)) ** 2);
      bn[i] += term;
      if (s.label && g < 3 * s.sigmaDeg * D2R && Math.abs(term) > best[i]) { best[i] = Math.abs(term); labels[i] = s.label; }
      if (s.omega && g < 4 * s.sigmaDeg * D2R) {
        // Turning about the spot centre: velocity omega r^_c x x projected on east and north at x.
        const lat = grid.latDeg[i] * D2R, lon = grid.lonDeg[i] * D2R;
        const c = [Math.cos(s.latDeg * D2R) * Math.cos(s.lonDeg * D2R), Math.cos(s.latDeg * D2R) * Math.sin(s.lonDeg * D2R), Math.sin(s.latDeg * D2R)];
        const x = [Math.cos(lat) * Math.cos(lon), Math.cos(lat) * Math.sin(lon), Math.sin(lat)];
        const v = [c[1] * x[2] - c[2] * x[1], c[2] * x[0] - c[0] * x[2], c[0] * x[1] - c[1] * x[0]];
        const e = [-Math.sin(lon), Math.cos(lon), 0];
        const nn = [-Math.sin(lat) * Math.cos(lon), -Math.sin(lat) * Math.sin(lon), Math.cos(lat)];
        vx[i] += s.omega * rKm * (v[0] * e[0] + v[1] * e[1] + v[2] * e[2]);
        vy[i] += s.omega * rKm * (v[0] * nn[0] + v[1] * nn[1] + v[2] * nn[2]);
      }
    }
  }
  if (balance) {
    let flux = 0, area = 0;
    for (let i = 0; i < n; i++) { const a = grid.rowAreaMm2[Math.floor(i / grid.nx)]; flux += bn[i] * a; area += a; }
    for (let i = 0; i < n; i++) bn[i] -= flux / area;
  }
  return { bn, vx, vy, labels };
}
