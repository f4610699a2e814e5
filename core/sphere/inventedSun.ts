// A whole Sun of our own invention for the demo of a spherical region: bipoles (two Gaussian spots
// of opposite flux each) carried by a differential-rotation profile seen in Carrington's frame,
// whose spots may also turn about their own centres; the map is a 2:1 Carrington plate carree with
// the net flux taken out (a flux-balanced Sun). Pure: the same bipoles and time give the same maps.
// The numbers are invented for the demo, not measured on the Sun.

import type { KeywordRecord } from '../frameAssembly/wcs.js';
import { KM_PER_MM, SOLAR_RADIUS_MM } from '../units.js';
import type { RotationProfile } from './differentialRotation.js';
import { CARRINGTON_SIDEREAL_MICRORAD_S, HOWARD_1990_SIDEREAL, angularRate } from './differentialRotation.js';

export interface InventedBipole {
  /** Centre at time 0, Carrington degrees. */
  readonly lonDeg: number;
  readonly latDeg: number;
  /** Peak field of the leading (westward) spot, G; the following spot has the opposite sign. */
  readonly peakG: number;
  readonly sigmaDeg: number;
  /** Distance between the two spots, degrees, and the tilt of their axis from east-west (positive: leading spot nearer the equator in either hemisphere). */
  readonly separationDeg: number;
  readonly tiltDeg: number;
  /** Each spot's own turning, rad/s, counter-clockwise seen from the corona. */
  readonly spinRadPerS?: number;
}

export interface InventedSunOptions {
  /** Rows of the map (default 180: 1-degree pixels); columns are twice as many. */
  readonly ny?: number;
  readonly profile?: RotationProfile;
  /** Rate of the map's frame, microrad/s (default Carrington's). */
  readonly frameRateMicroradPerS?: number;
}

export interface InventedSunMap {
  readonly keywords: KeywordRecord;
  readonly nx: number;
  readonly ny: number;
  readonly bn: Float64Array;
  /** Toward increasing longitude and toward the north, km/s. */
  readonly vx: Float64Array;
  readonly vy: Float64Array;
}

const D2R = Math.PI / 180;

const unit = (lonDeg: number, latDeg: number) => [
  Math.cos(latDeg * D2R) * Math.cos(lonDeg * D2R), Math.cos(latDeg * D2R) * Math.sin(lonDeg * D2R), Math.sin(latDeg * D2R),
];

/** The map `timeS` seconds after time 0 (`startMs`, UTC ms, for DATE-OBS). */
export function inventedSun(bipoles: readonly InventedBipole[], timeS: number, startMs: number, options: InventedSunOptions = {}): InventedSunMap {
  const ny = options.ny ?? 180, nx = 2 * ny;
  const profile = options.profile ?? HOWARD_1990_SIDEREAL;
  const frame = (options.frameRateMicroradPerS ?? CARRINGTON_SIDEREAL_MICRORAD_S) * 1e-6;
  const rKm = SOLAR_RADIUS_MM * KM_PER_MM;
  // Spot centres at this time: each carried by the profile at its own latitude.
  const spots: { c: number[]; peak: number; sigma: number; spin: number }[] = [];
  for (const b of bipoles) {
    const hemi = b.latDeg >= 0 ? 1 : -1;
    const half = b.separationDeg / 2;
    const dLat = half * Math.sin(b.tiltDeg * D2R) * hemi;
    const dLon = (half * Math.cos(b.tiltDeg * D2R)) / Math.cos(b.latDeg * D2R);
    for (const [s, sign] of [[1, 1], [-1, -1]] as const) {
      const lat = b.latDeg - s * dLat;
      const drift = ((angularRate(profile, lat * D2R) - frame) * timeS) / D2R;
      spots.push({ c: unit(b.lonDeg + s * dLon + drift, lat), peak: sign * b.peakG, sigma: b.sigmaDeg * D2R, spin: b.spinRadPerS ?? 0 });
    }
  }
  const n = nx * ny;
  const bn = new Float64Array(n), vx = new Float64Array(n), vy = new Float64Array(n);
  let flux = 0, area = 0;
  for (let r = 0; r < ny; r++) {
    const lat = -90 + (r + 0.5) * (180 / ny);
    const w = Math.cos(lat * D2R);
    for (let k = 0; k < nx; k++) {
      const lon = (k + 0.5) * (360 / nx);
      const x = unit(lon, lat);
      const i = r * nx + k;
      let b = 0, ve = 0, vn = 0, strongest = 0;
      let turning: (typeof spots)[number] | undefined;
      for (const s of spots) {
        const g = Math.acos(Math.max(-1, Math.min(1, x[0] * s.c[0] + x[1] * s.c[1] + x[2] * s.c[2])));
        const term = s.peak * Math.exp(-0.5 * (g / s.sigma) ** 2);
        b += term;
        // A pixel turns with the spot whose field dominates there, within 3 sigma of it.
        if (g < 3 * s.sigma && Math.abs(term) > strongest) { strongest = Math.abs(term); turning = s; }
      }
      if (turning && turning.spin !== 0) {
        // spin c x x, on east and north.
        const c = turning.c;
        const v = [c[1] * x[2] - c[2] * x[1], c[2] * x[0] - c[0] * x[2], c[0] * x[1] - c[1] * x[0]];
        ve = turning.spin * rKm * (-Math.sin(lon * D2R) * v[0] + Math.cos(lon * D2R) * v[1]);
        vn = turning.spin * rKm * (-Math.sin(lat * D2R) * Math.cos(lon * D2R) * v[0] - Math.sin(lat * D2R) * Math.sin(lon * D2R) * v[1] + Math.cos(lat * D2R) * v[2]);
      }
      bn[i] = b;
      vx[i] = (angularRate(profile, lat * D2R) - frame) * rKm * Math.cos(lat * D2R) + ve;
      vy[i] = vn;
      flux += b * w; area += w;
    }
  }
  for (let i = 0; i < n; i++) bn[i] -= flux / area;
  const keywords: KeywordRecord = {
    CTYPE1: 'CRLN-CAR', CTYPE2: 'CRLT-CAR', CUNIT1: 'deg', CUNIT2: 'deg', CRPIX1: (nx + 1) / 2, CRPIX2: (ny + 1) / 2,
    CRVAL1: 180, CRVAL2: 0, CDELT1: 360 / nx, CDELT2: 180 / ny, BUNIT: 'G', RSUN_REF: SOLAR_RADIUS_MM * 1e6,
    'DATE-OBS': new Date(startMs + timeS * 1000).toISOString().slice(0, 23), TIMESYS: 'UTC',
  };
  return { keywords, nx, ny, bn, vx, vy };
}

/** The demo's bipoles: two active belts, Joy's-law tilts, one bipole twisting. Invented. */
export const DEMO_BIPOLES: readonly InventedBipole[] = [
  { lonDeg: 70, latDeg: 18, peakG: 1100, sigmaDeg: 2.5, separationDeg: 8, tiltDeg: 6, spinRadPerS: 1.5e-6 },
  { lonDeg: 160, latDeg: 24, peakG: 800, sigmaDeg: 3, separationDeg: 10, tiltDeg: 8 },
  { lonDeg: 240, latDeg: -15, peakG: -950, sigmaDeg: 2.8, separationDeg: 9, tiltDeg: 5 },
  { lonDeg: 320, latDeg: -27, peakG: -700, sigmaDeg: 3.5, separationDeg: 12, tiltDeg: 10, spinRadPerS: -1e-6 },
];
