// One rate sample from one frame with its velocity: the composition of the engine's steps
// (flux transport, G_theta and G_A, the label split, emergence and shear with vector data, the
// noise uncertainty). Pure: everything it needs comes in, the kernel cache is the caller's.

import type { FluxKernelCache } from './fluxKernel.js';
import { fluxKernelFor } from './fluxKernel.js';
import type { Frame } from './frame.js';
import { hasVectorData } from './frame.js';
import type { VelocityMaps } from './fluxTransport.js';
import type { PatchCentre } from './frameAssembly/wcs.js';
import { fluxTransport } from './fluxTransport.js';
import { convolveTransport, helicityFluxFromConvolutions } from './helicityFlux.js';
import type { LabelSplit } from './labelSplit.js';
import { splitByLabels } from './labelSplit.js';
import { emergenceShear, emergenceTerm } from './emergenceShear.js';
import { estimateNoiseLevel } from './noiseLevel.js';
import { pixelAreaCm2 } from './units.js';
import { rateSigmaFromNoise } from './rateUncertainty.js';
import type { MotionCovariance } from './motionUncertainty.js';
import { rateSigmaFromMotions } from './motionUncertainty.js';

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

export interface RateInput {
  readonly frame: Frame;
  /** Velocity when not carried by the frame (inferred between frames). */
  readonly velocity?: VelocityMaps;
  readonly velocityMethod?: string;
  /** Footpoint labels; the frame's own labels when undefined; null for none. */
  readonly labels?: Int32Array | null;
  /** Sample time and interval when the velocity spans a frame pair. */
  readonly time?: number;
  readonly dtS?: number;
  /** Noise of bn in G; estimated from the frame when not given. */
  readonly noiseG?: number;
  readonly cache?: FluxKernelCache;
  /** Errors of the footpoint motions the velocity was built from (for the uncertainty). */
  readonly motions?: ReadonlyMap<number, MotionCovariance>;
  /** The frames those motions were measured between, UTC ms. */
  readonly motionFrom?: number;
  readonly motionTo?: number;
  /**
   * Normal plasma velocity (km/s) when `velocity` is the footpoint velocity u of vector data: the
   * emergence term comes from it and the horizontal field, the shear term is the rest of the total.
   */
  readonly normalVelocity?: Float64Array;
  /** The patch centre of the sample (core/frameAssembly/wcs.ts), passed through. */
  readonly centre?: PatchCentre;
  /** Quality flags to add (e.g. from the velocity model). */
  readonly flags?: readonly string[];
}

export interface RateResult {
  readonly sample: RateSample;
  readonly split?: LabelSplit;
  /** G_theta density, Mx^2 cm^-2 s^-1, NaN where no data. */
  readonly gTheta: Float64Array;
  /** The flux transport the rate was computed from (for the footpoints' motions). */
  readonly transport: ReturnType<typeof fluxTransport>;
}

export function rateSample(input: RateInput): RateResult {
  const { frame } = input;
  const kernel = fluxKernelFor(frame, input.cache);
  const t = fluxTransport(frame, input.velocity);
  const conv = convolveTransport(kernel, t);
  const flux = helicityFluxFromConvolutions(kernel, t, conv);
  const flags: string[] = [...(input.flags ?? [])];
  if (flux.maskedFraction > 0) flags.push('masked-pixels');
  const labels = input.labels === undefined ? frame.labels : input.labels ?? undefined;
  let split: LabelSplit | undefined;
  if (labels) {
    split = splitByLabels(kernel, t, labels, { total: flux.total, ...(input.cache && { cache: input.cache }) });
    if (split.ids.length === 0) { flags.push('no-footpoints'); split = undefined; }
  } else {
    flags.push('no-footpoints');
  }
  const vector = input.velocity ? (input.velocity.vz !== undefined && frame.bx !== undefined) : hasVectorData(frame);
  let es: { emergence: number; shear: number } | undefined;
  if (vector) {
    es = emergenceShear({ ...frame, vx: input.velocity?.vx ?? frame.vx, vy: input.velocity?.vy ?? frame.vy, vz: input.velocity?.vz ?? frame.vz }, flux.apx, flux.apy);
  } else if (input.normalVelocity && frame.bx && frame.by) {
    const emergence = emergenceTerm(flux.apx, flux.apy, frame.bx, frame.by, input.normalVelocity, frame.dx, frame.dy);
    es = { emergence, shear: flux.total - emergence };
  }
  const noiseG = input.noiseG ?? estimateNoiseLevel(frame.bn).sigma;
  // The uncertainty needs u itself; where the flux transport is Bn u with u given, use it.
  const ux = input.velocity?.vx ?? frame.vx!;
  const uy = input.velocity?.vy ?? frame.vy!;
  const sigmaNoise = rateSigmaFromNoise(conv, ux, uy, t.valid, Number.isFinite(noiseG) ? noiseG : 0, frame.dx, frame.dy);
  const motion = input.motions && labels
    ? rateSigmaFromMotions(t, conv, labels, input.motions, frame, kernel)
    : { total: 0, spin: 0, orbit: 0 };
  const sample: RateSample = {
    time: input.time ?? frame.time,
    dtS: input.dtS ?? 0,
    total: flux.total,
    totalGa: flux.totalGa,
    spin: split?.spinTotal ?? 0,
    orbit: split?.orbitTotal ?? 0,
    background: split?.background ?? flux.total,
    ...(es && { emergence: es.emergence, shear: es.shear }),
    sigmaTotal: Math.hypot(sigmaNoise, motion.total),
    sigmaSpin: motion.spin,
    sigmaOrbit: motion.orbit,
    sigmaMotion: motion.total,
    ...(input.motions && input.motionFrom !== undefined && input.motionTo !== undefined && { motionFrom: input.motionFrom, motionTo: input.motionTo }),
    noiseG,
    unsignedFlux: unsignedFlux(frame.bn, frame.dx, frame.dy, Number.isFinite(noiseG) && noiseG > 0 ? UNSIGNED_FLUX_FLOOR_NOISE * noiseG : 0),
    velocityMethod: input.velocityMethod ?? 'given',
    splitMethod: split ? 'labels' : 'none',
    maskedFraction: flux.maskedFraction,
    flags,
    ...(input.centre && { centre: input.centre }),
  };
  return { sample, ...(split && { split }), gTheta: flux.gTheta, transport: t };
}
