// The share of the helicity injection that the Sun's differential rotation alone would make:
// the same B_r and the same potential, with the footpoints moved only by a rotation profile
// Omega(B) = A + B sin^2 lat + C sin^4 lat (sidereal, microrad/s; default Howard, Harvey & Forgach
// 1990, Solar Phys. 130, 295: 2.894, -0.428, -0.370, the coefficients sunpy's diff_rot uses for
// 'howard', checked in test/core/sphereRotation.test.ts). The rest of the rate is attributed to the
// region's own motions. Published work on the helicity differential rotation injects: Berger &
// Ruzmaikin 2000 (J. Geophys. Res. 105, 10481), DeVore 2000 (ApJ 539, 944), Demoulin et al. 2002
// (A&A 382, 650) (references from memory).
//
// Velocities of a map are seen in a rotating frame (Carrington's for CRLN/CRLT maps): the profile's
// velocity in that frame is (Omega(lat) - Omega_frame) R cos(lat) toward increasing longitude. A
// rigid rotation injects nothing into a flux-balanced whole Sun, so there the frame does not
// matter; for a patch it does (docs/sphere.md).

import { KM_PER_MM } from '../units.js';
import type { PotentialGradient } from './potentialGradient.js';
import type { SphericalRate } from './sphericalHelicityFlux.js';
import { rateFromGradient } from './sphericalHelicityFlux.js';
import type { SphericalGrid } from './sphericalGrid.js';
import { nativeVelocity } from './sphericalGrid.js';
import type { SphericalTransport } from './sphericalTransport.js';

export interface RotationProfile {
  /** Omega = a + b sin^2(lat) + c sin^4(lat), microrad/s, sidereal. */
  readonly a: number;
  readonly b: number;
  readonly c: number;
}

/** Howard, Harvey & Forgach 1990, sidereal (microrad/s). */
export const HOWARD_1990_SIDEREAL: RotationProfile = { a: 2.894, b: -0.428, c: -0.370 };

/** Carrington's sidereal rate, 14.1844 deg/day (sunpy.sun.constants.sidereal_rotation_rate), microrad/s. */
export const CARRINGTON_SIDEREAL_MICRORAD_S = (14.1844 * Math.PI) / 180 / 86400 * 1e6;

/** The Earth's mean orbital rate, 0.9856 deg/day (the synodic correction sunpy uses), microrad/s: a Stonyhurst frame turns at it. */
export const EARTH_ORBIT_MICRORAD_S = (0.9856 * Math.PI) / 180 / 86400 * 1e6;

/** Angular rate of the profile at latitude `latRad`, rad/s. */
export function angularRate(p: RotationProfile, latRad: number): number {
  const s2 = Math.sin(latRad) ** 2;
  return (p.a + p.b * s2 + p.c * s2 * s2) * 1e-6;
}

/** d Omega / d lat, rad/s per radian. */
export function angularRateSlope(p: RotationProfile, latRad: number): number {
  const s = Math.sin(latRad), c = Math.cos(latRad);
  return (2 * p.b * s * c + 4 * p.c * s * s * s * c) * 1e-6;
}

/** The default frame rate of a grid's velocities: Carrington's for CR axes, the Earth's orbit for Stonyhurst ones, microrad/s. */
export function defaultFrameRate(grid: SphericalGrid): number {
  return grid.system === 'CR' ? CARRINGTON_SIDEREAL_MICRORAD_S : EARTH_ORBIT_MICRORAD_S;
}

/**
 * The profile's velocity in the frame turning at `frameRate` (microrad/s): vx toward increasing
 * longitude, vy = 0 (km/s), and the rate at which each pixel turns about the vertical, rad/s:
 * omega = (Omega - Omega_frame) sin(lat) - (1/2) Omega'(lat) cos(lat) (half the vertical vorticity).
 */
export function rotationMotion(grid: SphericalGrid, p: RotationProfile, frameRate: number): { vx: Float64Array; vy: Float64Array; spin: Float64Array } {
  const n = grid.nx * grid.ny;
  const vx = new Float64Array(n), vy = new Float64Array(n), spin = new Float64Array(n);
  const rKm = grid.radiusMm * KM_PER_MM;
  for (let i = 0; i < n; i++) {
    const lat = (grid.latDeg[i] * Math.PI) / 180;
    const w = angularRate(p, lat) - frameRate * 1e-6;
    vx[i] = w * rKm * Math.cos(lat);
    spin[i] = w * Math.sin(lat) - 0.5 * angularRateSlope(p, lat) * Math.cos(lat);
  }
  return { vx, vy, spin };
}

export interface RotationShare extends SphericalRate {
  /** The profile and frame rate used (microrad/s). */
  readonly profile: RotationProfile;
  readonly frameRate: number;
}

/**
 * The injection by the rotation profile alone, for the B_r of `t` and its potential gradient; with
 * `pixelSpin` false, without the pixels' own spin (for a gradient by spherical harmonics).
 */
export function differentialRotationShare(
  grid: SphericalGrid, t: SphericalTransport, gradient: PotentialGradient,
  profile: RotationProfile = HOWARD_1990_SIDEREAL, frameRate = defaultFrameRate(grid), pixelSpin = true,
): RotationShare {
  const m = rotationMotion(grid, profile, frameRate);
  const { ue, un } = nativeVelocity(grid, m.vx, m.vy);
  return { ...rateFromGradient(grid, t, gradient, ue, un, pixelSpin ? m.spin : new Float64Array(m.spin.length)), profile, frameRate };
}
