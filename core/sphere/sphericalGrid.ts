// The pixels of a heliographic map on the sphere: Carrington or Stonyhurst plate carree (CAR) and
// cylindrical equal area (CEA), whole-Sun or a patch (FITS WCS paper II, Calabretta & Greisen 2002,
// sections 5.2.2 and 5.2.3; solar axes as in Thompson 2006). Each pixel knows its heliographic
// longitude and latitude (from core/frameAssembly/wcs.ts, checked against astropy) and its area.
//
// The helicity engine on the sphere works in the projection's native coordinates (phi, theta): in
// them every row has one latitude and the columns are evenly spaced in longitude, which makes the
// Green's function of a row pair a function of the longitude difference alone (a convolution along
// rows). The Green's function only depends on the angle between two points, so native coordinates
// serve as well as heliographic ones; when the projection is oblique (CRVAL2 != 0 for CAR/CEA) the
// two differ by a rotation of the sphere, and `nativeTurn` gives the angle at each pixel between the
// heliographic north and the native north, to turn velocities into native components.
//
// Velocities on such a grid: vx is toward increasing (heliographic) longitude, vy toward the north,
// km/s, whatever the signs of CDELT1 and CDELT2 (docs/sphere.md).

import type { KeywordRecord } from '../frameAssembly/wcs.js';
import { frameWcs, pixelToWorld } from '../frameAssembly/wcs.js';
import { InputError } from '../inputError.js';
import { SOLAR_RADIUS_MM } from '../units.js';

export type SphericalProjection = 'CAR' | 'CEA';

export interface SphericalGrid {
  readonly nx: number;
  readonly ny: number;
  readonly projection: SphericalProjection;
  /** Sphere radius, Mm (RSUN_REF when the headers give it). */
  readonly radiusMm: number;
  /** Native longitude of each column, radians (decreasing with the column when CDELT1 < 0). */
  readonly colLon: Float64Array;
  /** Native latitude of each row, radians. */
  readonly rowLat: Float64Array;
  /** Area on the sphere of one pixel of each row, Mm^2. */
  readonly rowAreaMm2: Float64Array;
  /** Heliographic longitude [0, 360) and latitude of every pixel centre, degrees (row-major). */
  readonly lonDeg: Float64Array;
  readonly latDeg: Float64Array;
  /**
   * Angle from the heliographic north to the native north at every pixel, radians, counter-clockwise
   * seen from the corona; absent when the native coordinates are the heliographic ones.
   */
  readonly nativeTurn?: Float64Array;
  /** True when the columns go once round the Sun (nx |CDELT1| = 360 degrees). */
  readonly wholeSun: boolean;
  /** 'CR' (Carrington) or 'HG' (Stonyhurst) axes. */
  readonly system: 'CR' | 'HG';
}

const D2R = Math.PI / 180;

/** Axis types read here: Carrington and Stonyhurst heliographic, CAR or CEA. */
const AXES = /^(CRLN|HGLN)-(CAR|CEA)$/;

/**
 * The spherical grid of a map with `nx` x `ny` pixels from its WCS keywords. Throws InputError
 * naming the keyword when the map is not a CAR/CEA heliographic map, when its pixel axes are turned
 * against the projection's (a PC/CD matrix with off-diagonal terms), or when it spans more than the
 * sphere.
 */
export function sphericalGrid(k: KeywordRecord, nx: number, ny: number, source: string): SphericalGrid {
  const c1 = String(k.CTYPE1 ?? '').trim().toUpperCase(), c2 = String(k.CTYPE2 ?? '').trim().toUpperCase();
  const m1 = AXES.exec(c1);
  if (!m1) throw new InputError(source, 'CTYPE1', `"${c1}" is not a heliographic longitude on a CAR or CEA grid (CRLN-CAR, CRLN-CEA, HGLN-CAR, HGLN-CEA)`);
  const latType = `${m1[1].slice(0, 2)}LT-${m1[2]}`;
  if (c2 !== latType) throw new InputError(source, 'CTYPE2', `"${c2}" does not go with CTYPE1 "${c1}" (expected ${latType})`);
  if (!Number.isInteger(nx) || nx < 1 || !Number.isInteger(ny) || ny < 1) throw new InputError(source, 'NAXIS', `${nx} x ${ny} is not a grid`);
  const w = frameWcs(k, nx, ny);
  if (!w) throw new InputError(source, 'CTYPE1', 'no spherical WCS');
  if (w.pc[1] !== 0 || w.pc[2] !== 0) {
    throw new InputError(source, 'PC/CD', 'the pixel axes are turned against the projection\'s axes; only maps whose rows follow the projection\'s latitude are read');
  }
  const unit = (u: string, key: string) => {
    const f = u.toLowerCase() === 'deg' || u.toLowerCase() === 'degree' || u.toLowerCase() === 'degrees' ? 1 : u.toLowerCase() === 'rad' ? 180 / Math.PI : undefined;
    if (f === undefined) throw new InputError(source, key, `unit "${u}" is not deg or rad`);
    return f;
  };
  const f1 = unit(w.cunit[0], 'CUNIT1'), f2 = unit(w.cunit[1], 'CUNIT2');
  const d1 = w.cdelt[0] * w.pc[0] * f1, d2 = w.cdelt[1] * w.pc[3] * f2; // degrees per pixel
  if (!(Number.isFinite(d1) && d1 !== 0)) throw new InputError(source, 'CDELT1', `${w.cdelt[0]} is not a pixel size`);
  if (!(Number.isFinite(d2) && d2 !== 0)) throw new InputError(source, 'CDELT2', `${w.cdelt[1]} is not a pixel size`);
  const span = nx * Math.abs(d1);
  if (span > 360 * (1 + 1e-9)) throw new InputError(source, 'CDELT1', `${nx} columns of ${Math.abs(d1)} deg span ${span} deg, more than once round the Sun`);
  const wholeSun = Math.abs(span - 360) <= 360 * 1e-9;
  const projection = m1[2] as SphericalProjection;
  const lambda = projection === 'CEA' ? (w.pv.PV2_1 ?? 1) : 1;
  if (projection === 'CEA' && !(lambda > 0 && lambda <= 1)) throw new InputError(source, 'PV2_1', `lambda ${lambda} must lie in (0, 1]`);
  // sin(native latitude) of an intermediate coordinate y (degrees), clamped at the poles for the edges.
  const sinTheta = (y: number) => projection === 'CAR'
    ? Math.sin(Math.max(-90, Math.min(90, y)) * D2R)
    : Math.max(-1, Math.min(1, (lambda * Math.PI * y) / 180));
  const colLon = new Float64Array(nx);
  for (let i = 0; i < nx; i++) colLon[i] = (i + 1 - w.crpix[0]) * d1 * D2R;
  const rowLat = new Float64Array(ny);
  const rowAreaMm2 = new Float64Array(ny);
  const radiusRef = typeof k.RSUN_REF === 'number' && k.RSUN_REF > 0 ? k.RSUN_REF / 1e6 : SOLAR_RADIUS_MM;
  for (let j = 0; j < ny; j++) {
    const y = (j + 1 - w.crpix[1]) * d2;
    const s = projection === 'CAR' ? Math.sin(y * D2R) : (lambda * Math.PI * y) / 180;
    if ((projection === 'CAR' && Math.abs(y) >= 90) || Math.abs(s) >= 1) {
      throw new InputError(source, 'CRPIX2/CDELT2', `row ${j + 1} is centred at or beyond a pole`);
    }
    rowLat[j] = Math.asin(s);
    rowAreaMm2[j] = radiusRef * radiusRef * Math.abs(d1 * D2R) * Math.abs(sinTheta(y + d2 / 2) - sinTheta(y - d2 / 2));
  }
  const n = nx * ny;
  const lonDeg = new Float64Array(n), latDeg = new Float64Array(n), turn = new Float64Array(n);
  let oblique = false;
  const h = 1e-3; // pixels, for the direction of the native north
  const north = Math.sign(d2);
  /** World coordinates and native-north angle of pixel (i, j), 0-based, by the WCS. */
  const world = (i: number, j: number): [number, number, number] => {
    const c = pixelToWorld(w, i + 1, j + 1);
    const a = pixelToWorld(w, i + 1, j + 1 + h), b = pixelToWorld(w, i + 1, j + 1 - h);
    if (!c || !a || !b) throw new InputError(source, 'WCS', `pixel (${i + 1}, ${j + 1}) has no world coordinates`);
    let dl = a[0] - b[0];
    dl -= 360 * Math.round(dl / 360);
    const dE = north * dl * Math.cos(c[1] * D2R), dN = north * (a[1] - b[1]);
    return [c[0], c[1], Math.atan2(-dE, dN)];
  };
  // Native coordinates are the heliographic ones (longitude offset by CRVAL1) unless the projection
  // is oblique: tried on the corners and the centre, then every pixel by the formula, which is far
  // faster than the WCS for a large whole-Sun map; otherwise every pixel by the WCS.
  const lon0 = w.crval[0] * f1;
  const wrap = (d: number) => ((d % 360) + 360) % 360;
  const plain = [[0, 0], [nx - 1, 0], [0, ny - 1], [nx - 1, ny - 1], [nx >> 1, ny >> 1]].every(([i, j]) => {
    const [lon, lat, t] = world(i, j);
    let dl = lon - wrap(lon0 + colLon[i] / D2R);
    dl -= 360 * Math.round(dl / 360);
    return Math.abs(t) <= 1e-9 && Math.abs(dl) <= 1e-9 && Math.abs(lat - rowLat[j] / D2R) <= 1e-9;
  });
  for (let j = 0; j < ny; j++) {
    for (let i = 0; i < nx; i++) {
      const p = j * nx + i;
      if (plain) { lonDeg[p] = wrap(lon0 + colLon[i] / D2R); latDeg[p] = rowLat[j] / D2R; continue; }
      const [lon, lat, t] = world(i, j);
      lonDeg[p] = lon; latDeg[p] = lat; turn[p] = t;
      if (Math.abs(t) > 1e-9) oblique = true;
    }
  }
  return {
    nx, ny, projection, radiusMm: radiusRef, colLon, rowLat, rowAreaMm2, lonDeg, latDeg, wholeSun,
    system: m1[1].slice(0, 2) as 'CR' | 'HG', ...(oblique && { nativeTurn: turn }),
  };
}

/** Area of pixel `index` on the sphere, Mm^2. */
export function pixelAreaOnSphere(grid: SphericalGrid, index: number): number {
  return grid.rowAreaMm2[Math.floor(index / grid.nx)];
}

/** Velocity (toward increasing longitude, toward the north) in the native components of a grid. */
export function nativeVelocity(grid: SphericalGrid, vx: ArrayLike<number>, vy: ArrayLike<number>): { ue: Float64Array; un: Float64Array } {
  const n = grid.nx * grid.ny;
  const ue = new Float64Array(n), un = new Float64Array(n);
  const t = grid.nativeTurn;
  for (let i = 0; i < n; i++) {
    if (!t) { ue[i] = vx[i]; un[i] = vy[i]; continue; }
    const c = Math.cos(t[i]), s = Math.sin(t[i]);
    ue[i] = c * vx[i] + s * vy[i];
    un[i] = -s * vx[i] + c * vy[i];
  }
  return { ue, un };
}
