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
/** Carrington's sidereal rate, microrad/s (14.1844 deg/day). */
const CARRINGTON = (14.1844 * D2R) / 86400 * 1e6;

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

/**
 * Velocity of a turning of the sphere about the axis through (lonDeg, latDeg) at omega rad/s
 * (counter-clockwise seen from the corona above that point), within `radiusDeg` of it: vx east, vy north, km/s.
 */
export function turnAbout(grid: SphericalGrid, lonDeg: number, latDeg: number, omega: number, radiusDeg = 180) {
  const n = grid.nx * grid.ny;
  const vx = new Float64Array(n), vy = new Float64Array(n);
  const rKm = grid.radiusMm * 1e3;
  const c = [Math.cos(latDeg * D2R) * Math.cos(lonDeg * D2R), Math.cos(latDeg * D2R) * Math.sin(lonDeg * D2R), Math.sin(latDeg * D2R)];
  for (let i = 0; i < n; i++) {
    if (angleBetween(grid.lonDeg[i], grid.latDeg[i], lonDeg, latDeg) > radiusDeg * D2R) continue;
    const lat = grid.latDeg[i] * D2R, lon = grid.lonDeg[i] * D2R;
    const x = [Math.cos(lat) * Math.cos(lon), Math.cos(lat) * Math.sin(lon), Math.sin(lat)];
    const v = [c[1] * x[2] - c[2] * x[1], c[2] * x[0] - c[0] * x[2], c[0] * x[1] - c[1] * x[0]];
    vx[i] = omega * rKm * (-Math.sin(lon) * v[0] + Math.cos(lon) * v[1]);
    vy[i] = omega * rKm * (-Math.sin(lat) * Math.cos(lon) * v[0] - Math.sin(lat) * Math.sin(lon) * v[1] + Math.cos(lat) * v[2]);
  }
  return { vx, vy };
}

/** The three patch scenes of the planar-error table (docs/sphere.md), scaled with the patch size `s` (degrees). */
export function patchScene(grid: SphericalGrid, kind: 'orbit' | 'spin' | 'rotation', lon: number, lat: number, s: number) {
  const n = grid.nx * grid.ny;
  if (kind === 'orbit') {
    // Two opposite spots 0.4 s apart, each carried without turning (its centre's velocity over the
    // whole spot) as if they circled the patch centre at 2 microrad/s.
    const spots = [
      { lonDeg: lon - 0.14 * s, latDeg: lat - 0.14 * s, peak: 1000, sigmaDeg: 0.05 * s },
      { lonDeg: lon + 0.14 * s, latDeg: lat + 0.14 * s, peak: -800, sigmaDeg: 0.06 * s },
    ];
    const sc = spotScene(grid, spots);
    const turn = turnAbout(grid, lon, lat, 2e-6);
    const vx = new Float64Array(n), vy = new Float64Array(n);
    for (const p of spots) {
      let best = Infinity, at = 0;
      for (let i = 0; i < n; i++) {
        const d = angleBetween(grid.lonDeg[i], grid.latDeg[i], p.lonDeg, p.latDeg);
        if (d < best) { best = d; at = i; }
      }
      for (let i = 0; i < n; i++) {
        if (angleBetween(grid.lonDeg[i], grid.latDeg[i], p.lonDeg, p.latDeg) < 4 * p.sigmaDeg * D2R) { vx[i] = turn.vx[at]; vy[i] = turn.vy[at]; }
      }
    }
    return { bn: sc.bn, vx, vy };
  }
  if (kind === 'spin') {
    const sc = spotScene(grid, [
      { lonDeg: lon - 0.1 * s, latDeg: lat, peak: 1200, sigmaDeg: 0.08 * s, omega: 3e-6 },
      { lonDeg: lon + 0.2 * s, latDeg: lat + 0.1 * s, peak: -700, sigmaDeg: 0.06 * s },
    ]);
    return { bn: sc.bn, vx: sc.vx, vy: sc.vy };
  }
  // A bipole whose spots sit 0.3 s apart in latitude, moved by the Howard profile in Carrington's frame.
  const sc = spotScene(grid, [
    { lonDeg: lon - 0.05 * s, latDeg: lat - 0.15 * s, peak: 900, sigmaDeg: 0.06 * s },
    { lonDeg: lon + 0.05 * s, latDeg: lat + 0.15 * s, peak: -900, sigmaDeg: 0.06 * s },
  ]);
  const vx = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    const b = grid.latDeg[i] * D2R;
    vx[i] = (2.894 - 0.428 * Math.sin(b) ** 2 - 0.370 * Math.sin(b) ** 4 - CARRINGTON) * 1e-6 * grid.radiusMm * 1e3 * Math.cos(b);
  }
  return { bn: sc.bn, vx, vy: new Float64Array(n) };
}
