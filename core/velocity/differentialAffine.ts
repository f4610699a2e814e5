// The differential affine velocity estimator (Schuck 2006). In a Gaussian window about each pixel
// the velocity is affine, u = (U0 + Ux x + Uy y, V0 + Vx x + Vy y), and the normal-field evolution
// equation dBz/dt + div(Bz u) = 0 is fitted in the least-squares sense:
//   dBz/dt + U0 Gx + V0 Gy + Ux (x Gx + Bz) + Vy (y Gy + Bz) + Uy y Gx + Vx x Gy = 0,
// with Bz the mid-time field (a + b)/2, G its gradient and dBz/dt = (b - a)/dt, so the result
// belongs to the mid-time. The window centre's (U0, V0) is the velocity there. Everything is done
// per pixel and converted to km/s at the end, so unequal pixel sides are handled.

import { affineWindowFit } from './affineWindowFit.js';
import type { AffineFitOptions, ModelColumn } from './affineWindowFit.js';
import type { AffineFitWorkspace } from './fitWindowPasses.js';
import { derivativeX, derivativeY } from './gradient.js';
import { KM_PER_MM } from '../units.js';

export interface AffineOptions {
  readonly sigma: number;
  readonly minPivot: number;
  /** Solve only at these centres (1), e.g. where the field is above the threshold; others get NaN. */
  readonly solveAt?: Uint8Array;
  /**
   * Noise of each frame's maps, G (bn; bx, by for the vector estimator): the fit is corrected for
   * the noise in its regressors (core/velocity/affineWindowFit.ts). Absent: no correction.
   */
  readonly noise?: { readonly bn: number; readonly bt?: number };
  /** The pair's midAndRate when the caller has made it already (saves two maps). */
  readonly midAndRate?: { readonly mid: Float64Array; readonly rate: Float64Array };
  /**
   * The caller's workspace for the fit's windowed sums (core/velocity/fitWindowPasses.ts: SIMD
   * kernels in memory kept from one pair to the next); without one, `simd` as affineWindowFit takes it.
   * The same velocities bit for bit either way.
   */
  readonly workspace?: AffineFitWorkspace;
  readonly simd?: boolean;
}

/** The fit options of `options` (workspace, simd). */
export function fitOptionsOf(options: AffineOptions): AffineFitOptions {
  return { ...(options.workspace && { workspace: options.workspace }), ...(options.simd !== undefined && { simd: options.simd }) };
}

/** Sum of the squared taps of the fourth-order central difference (core/velocity/gradient.ts): 130/144. */
export const DERIVATIVE_NOISE_GAIN = (1 + 64 + 64 + 1) / 144;

/**
 * Noise variances per pixel of DAVE's channels (Gx, Gy, Bz, dBz/dt) for frames with noise sigma
 * (G) each, dt seconds apart: the mid-time field (a + b)/2 has sigma^2/2, its derivatives
 * sigma^2/2 times the derivative's gain, the rate 2 sigma^2/dt^2; the rate's noise is
 * uncorrelated with the mid-time field's, so only the regressors' variances matter.
 */
export function daveNoiseVariance(sigma: number, dtS: number): number[] {
  const mid = (sigma * sigma) / 2;
  return [mid * DERIVATIVE_NOISE_GAIN, mid * DERIVATIVE_NOISE_GAIN, mid, (2 * sigma * sigma) / (dtS * dtS)];
}

export interface AffineVelocity {
  /** Velocity, km/s, NaN where the centre had no data or the window was ill-conditioned. */
  readonly vx: Float64Array;
  readonly vy: Float64Array;
  readonly illConditioned: number;
}

/** Mid-time field and time derivative of a pair: (a + b)/2 and (b - a)/dt (G, G/s). */
export function midAndRate(a: ArrayLike<number>, b: ArrayLike<number>, dtS: number): { mid: Float64Array; rate: Float64Array } {
  const n = a.length;
  const mid = new Float64Array(n), rate = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    mid[i] = 0.5 * (a[i] + b[i]);
    rate[i] = (b[i] - a[i]) / dtS;
  }
  return { mid, rate };
}

const t = (channel: number, px = 0, py = 0, coef = 1) => ({ coef, channel, px, py });

// Channels: 0 Gx, 1 Gy, 2 Bz, 3 dBz/dt. Columns in the order Ux, Vy, Uy, Vx, U0, V0 (the wanted
// ones last, where their determinacy check is cheapest).
export const DAVE_COLUMNS: readonly ModelColumn[] = [
  [t(0, 1, 0), t(2)], [t(1, 0, 1), t(2)], [t(0, 0, 1)], [t(1, 1, 0)], [t(0)], [t(1)],
];
export const DAVE_TARGET: ModelColumn = [t(3)];

/**
 * Penalty on the velocity gradients (Ux, Vy, Uy, Vx), relative to the unit-diagonal normal matrix.
 * Around a round feature the spin about its centre is undetermined, and off the centre that spin
 * mixes into (U0, V0); the penalty makes the fit take the least-deformed flow, i.e. no spin, as
 * the pattern shows. It is far below the eigenvalues of determined directions (the imposed-flow
 * tests bound its bias).
 */
export const GRADIENT_RIDGE = 1e-3;
export const DAVE_RIDGE: readonly number[] = [GRADIENT_RIDGE, GRADIENT_RIDGE, GRADIENT_RIDGE, GRADIENT_RIDGE, 0, 0];

/** Velocity between two bn maps dt seconds apart on a grid of nx x ny pixels of dx x dy Mm. */
export function differentialAffineVelocity(
  a: ArrayLike<number>, b: ArrayLike<number>, nx: number, ny: number, dx: number, dy: number, dtS: number,
  options: AffineOptions,
): AffineVelocity {
  const { mid, rate } = options.midAndRate ?? midAndRate(a, b, dtS);
  const gx = derivativeX(mid, nx, ny), gy = derivativeY(mid, nx, ny);
  const noise = options.noise ? daveNoiseVariance(options.noise.bn, dtS) : undefined;
  const fit = affineWindowFit([gx, gy, mid, rate], nx, ny, DAVE_COLUMNS, DAVE_TARGET, options.sigma, options.minPivot, [4, 5], DAVE_RIDGE, options.solveAt, noise, fitOptionsOf(options));
  const [u, v] = fit.params;
  // pixels/s -> km/s, at the solved centres (NaN elsewhere).
  for (const i of fit.centres) {
    u[i] *= dx * KM_PER_MM;
    v[i] *= dy * KM_PER_MM;
  }
  return { vx: u, vy: v, illConditioned: fit.illConditioned };
}
