// The helicity injection rate through the photosphere of a spherical map, in the G_A form
//
//   dH/dt = -2 Int (A_p . u) B_r dS,   A_p = r^ x grad_s psi,   psi = Int G(gamma) B_r' dS'
//
// (Berger & Field 1984; Pariat, Demoulin & Berger 2005 for the plane; G the Green's function of
// the surface Laplacian with a uniform return flux, core/sphere/potentialGradient.ts). Units as in
// the planar engine: B in G, lengths Mm, velocities km/s, A_p in G cm, densities Mx^2 cm^-2 s^-1,
// rates Mx^2/s; a positive footpoint turning counter-clockwise seen from the corona injects
// negative helicity, as in core/helicityFlux.ts (east, north, r^ play x, y, z).
//
// The rate is reported in two parts: `pairs`, the sum over every pixel pair but each pixel with
// itself (what the planar engine computes), and `selfPixel`, the spin each pixel's own flux has as
// it turns with the local vorticity, -(omega / 2 pi) Phi^2 (core/sphere/pixelSpin.ts). With it, a
// rigidly rotating flux-balanced Sun injects nothing to rounding; without it, the discrete sum is
// left with (Omega / 2 pi) Sum sin(lat_i) Phi_i^2, which vanishes only as the pixels shrink.

import { CM_PER_KM, CM_PER_MM } from '../units.js';
import { pixelSpinRate } from './pixelSpin.js';
import type { PotentialGradient } from './potentialGradient.js';
import { potentialGradients } from './potentialGradient.js';
import type { SphericalGrid } from './sphericalGrid.js';
import type { SphericalTransport } from './sphericalTransport.js';

export interface SphericalRate {
  /** Sum over pixel pairs (each pixel with itself left out), Mx^2/s. */
  readonly pairs: number;
  /** Spin of each pixel's own flux, Mx^2/s. */
  readonly selfPixel: number;
  /** pairs + selfPixel, Mx^2/s. */
  readonly total: number;
}

export interface SphericalHelicityFlux extends SphericalRate {
  /** G_A density (pairs and own spin), Mx^2 cm^-2 s^-1; NaN where the pixel had no data. */
  readonly density: Float64Array;
  /** A_p toward increasing heliographic longitude and toward the north, G cm; NaN where no data. */
  readonly ape: Float64Array;
  readonly apn: Float64Array;
  readonly maskedFraction: number;
  /** grad_s psi in native components (kept for further rates with other velocities). */
  readonly gradient: PotentialGradient;
}

/** Pixel area in cm^2 of each row. */
export function rowAreaCm2(grid: SphericalGrid): Float64Array {
  return grid.rowAreaMm2.map((a) => a * CM_PER_MM * CM_PER_MM);
}

/**
 * The rate for B_r and a gradient already made, with velocity (ue, un) (native, km/s) and pixel
 * spin `spin` (rad/s), summed over the pixels where `weight` is non-zero (all valid ones when absent).
 * Per-pixel contributions go to `perPixel` (Mx^2/s) when given.
 */
export function rateFromGradient(
  grid: SphericalGrid, t: Pick<SphericalTransport, 'bn' | 'valid'>, gradient: PotentialGradient,
  ue: ArrayLike<number>, un: ArrayLike<number>, spin: ArrayLike<number>,
  perPixel?: { pairs: Float64Array; self: Float64Array },
): SphericalRate {
  const { nx, ny } = grid;
  const areas = rowAreaCm2(grid);
  const { ge, gn } = gradient;
  let pairs = 0, self = 0;
  for (let r = 0; r < ny; r++) {
    const a = areas[r];
    for (let k = 0; k < nx; k++) {
      const i = r * nx + k;
      if (!t.valid[i]) continue;
      const b = t.bn[i];
      // A_p = r^ x grad psi = (-g_N, g_E); u in km/s -> cm/s.
      const p = -2 * b * (-gn[i] * ue[i] + ge[i] * un[i]) * CM_PER_KM * a;
      const phi = b * a;
      const s = (-spin[i] / (2 * Math.PI)) * phi * phi;
      pairs += p; self += s;
      if (perPixel) { perPixel.pairs[i] = p; perPixel.self[i] = s; }
    }
  }
  return { pairs, selfPixel: self, total: pairs + self };
}

/** The rate, its density map and A_p for a spherical map (gradient made here unless given; `pixelSpin` false leaves out the pixels' own spin). */
export function sphericalHelicityFlux(grid: SphericalGrid, t: SphericalTransport, gradient?: PotentialGradient, pixelSpin = true): SphericalHelicityFlux {
  const g = gradient ?? potentialGradients(grid, [t.bn])[0];
  const n = grid.nx * grid.ny;
  // No pixel's own spin with a gradient by spherical harmonics (core/sphere/sphericalHarmonics.ts).
  const spin = pixelSpin ? pixelSpinRate(grid, t.ue, t.un, t.valid) : new Float64Array(n);
  const per = { pairs: new Float64Array(n), self: new Float64Array(n) };
  const rate = rateFromGradient(grid, t, g, t.ue, t.un, spin, per);
  const areas = rowAreaCm2(grid);
  const density = new Float64Array(n), ape = new Float64Array(n), apn = new Float64Array(n);
  const turn = grid.nativeTurn;
  for (let i = 0; i < n; i++) {
    if (!t.valid[i]) { density[i] = NaN; ape[i] = NaN; apn[i] = NaN; continue; }
    density[i] = (per.pairs[i] + per.self[i]) / areas[Math.floor(i / grid.nx)];
    const ae = -g.gn[i], an = g.ge[i];
    if (!turn) { ape[i] = ae; apn[i] = an; continue; }
    const c = Math.cos(turn[i]), s = Math.sin(turn[i]);
    ape[i] = c * ae - s * an;
    apn[i] = s * ae + c * an;
  }
  return { ...rate, density, ape, apn, maskedFraction: t.maskedFraction, gradient: g };
}
