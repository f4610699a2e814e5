// One rate sample: what the engine reports for one frame (or frame pair), in core units, and the
// unsigned flux it carries. Made by measureRate (core/measureRate.ts).

import type { PatchCentre } from './frameAssembly/wcs.js';
import type { SphereFigures } from './sphere/sphereColumns.js';
import { pixelAreaCm2 } from './units.js';

export interface RateSample {
  /** Sample time, UTC ms (the frame time, or the mid-time of a frame pair). */
  readonly time: number;
  /** Interval between the two frames the velocity came from, s (0 when the frame carried it). */
  readonly dtS: number;
  /** Rates, Mx^2/s. */
  readonly total: number;
  readonly totalGa: number;
  readonly spin: number;
  readonly orbit: number;
  readonly background: number;
  readonly emergence?: number;
  readonly shear?: number;
  /**
   * 1-sigma of the total, Mx^2/s: field noise through the flux transport, and, when the footpoint
   * motions were measured, their errors (core/motionUncertainty.ts).
   */
  readonly sigmaTotal: number;
  /** 1-sigma of spin and orbit from the measured motions' errors, Mx^2/s (0 when the velocity was given). */
  readonly sigmaSpin: number;
  readonly sigmaOrbit: number;
  /** The part of sigmaTotal from the motions' errors alone, Mx^2/s. */
  readonly sigmaMotion: number;
  /** The frames the footpoint motions were measured between, UTC ms (for the budget's errors); absent when none. */
  readonly motionFrom?: number;
  readonly motionTo?: number;
  /** Noise level used, G. */
  readonly noiseG: number;
  /**
   * Unsigned flux, Mx: sum of |Bn| dA over the pixels of the frame the rate was taken on (the
   * mid-time frame of a pair) where |Bn| is at least UNSIGNED_FLUX_FLOOR_NOISE times the noise
   * (every valid pixel when the noise is unknown).
   */
  readonly unsignedFlux?: number;
  /** How the velocity was obtained: 'given' or the inference method. */
  readonly velocityMethod: string;
  /** 'labels' when spin and orbit come from the exact split, 'none' without footpoints. */
  readonly splitMethod: 'labels' | 'none';
  readonly maskedFraction: number;
  /** Quality flags in words: 'no-footpoints', 'masked-pixels', ... */
  readonly flags: readonly string[];
  /** Where the patch sat on the Sun, when the frames' headers say (the mean of a pair's two frames). */
  readonly centre?: PatchCentre;
  /**
   * A sample of a map on the sphere (core/sphere/measureSphere.ts sphereRateSample): the
   * differential-rotation share, the hemispheres and the planar departure, which core/accumulate.ts
   * turns into the sphere's series columns. Absent for planar frames.
   */
  readonly sphere?: SphereFigures;
}

/**
 * The unsigned flux counts pixels at or above this many noise units: noise alone over a whole
 * patch adds about 0.8 sigma per pixel (the mean of |N(0, sigma)|), as much as a small region's
 * flux on a 512^2 patch at 8 G; above 3 sigma noise adds 0.27 % of the pixels at about 3.3 sigma.
 */
export const UNSIGNED_FLUX_FLOOR_NOISE = 3;

/** Sum of |bn| dA (Mx) over valid pixels with |bn| >= floorG. */
export function unsignedFlux(bn: Float64Array, dx: number, dy: number, floorG: number): number {
  let sum = 0;
  for (let i = 0; i < bn.length; i++) {
    const a = Math.abs(bn[i]);
    if (a >= floorG) sum += a; // NaN fails the comparison
  }
  return sum * pixelAreaCm2(dx, dy);
}
