// The vector-magnetogram extension of the affine estimator (Schuck 2008). The horizontal plasma
// velocity V = (vx, vy) and the normal velocity vz are both affine in the window, and the fitted
// equation is the normal component of the induction equation
//   dBz/dt + div(Bz V - vz Bh) = 0,
// whose flux Bz V - vz Bh is exactly the transport Bn u = Bn v_t - v_n B_t of core/fluxTransport.ts.
// Per pixel, with Hx = Bx/dx, Hy = By/dy (so that vz is in Mm/s) and D = dHx/dx + dHy/dy:
//   dBz/dt + [DAVE terms] - W0 D - Wx (x D + Hx) - Wy (y D + Hy) = 0,  vz = W0 + Wx x + Wy y.
// The gradients Wx, Wy carry the same small penalty as DAVE's velocity gradients.

import { affineWindowFit } from './affineWindowFit.js';
import type { ModelColumn } from './affineWindowFit.js';
import { DAVE_COLUMNS, DAVE_RIDGE, DAVE_TARGET, DERIVATIVE_NOISE_GAIN, GRADIENT_RIDGE, daveNoiseVariance, fitOptionsOf, midAndRate } from './differentialAffine.js';
import type { AffineOptions } from './differentialAffine.js';
import { derivativeX, derivativeY } from './gradient.js';
import { KM_PER_MM } from '../units.js';

export interface VectorAffineVelocity {
  /** Plasma velocity, km/s, NaN where no fit. */
  readonly vx: Float64Array;
  readonly vy: Float64Array;
  readonly vz: Float64Array;
  readonly illConditioned: number;
}

const t = (channel: number, px = 0, py = 0, coef = 1) => ({ coef, channel, px, py });

// Channels: 0 Gx, 1 Gy, 2 Bz, 3 dBz/dt, 4 Hx, 5 Hy, 6 D. Columns: Wx, Wy, DAVE's six (Ux, Vy,
// Uy, Vx, U0, V0), then W0: the wanted U0, V0, W0 last.
export const VECTOR_COLUMNS: readonly ModelColumn[] = [
  [t(6, 1, 0, -1), t(4, 0, 0, -1)], [t(6, 0, 1, -1), t(5, 0, 0, -1)],
  ...DAVE_COLUMNS,
  [t(6, 0, 0, -1)],
];

export interface VectorPair {
  readonly bn: readonly [ArrayLike<number>, ArrayLike<number>];
  readonly bx: readonly [ArrayLike<number>, ArrayLike<number>];
  readonly by: readonly [ArrayLike<number>, ArrayLike<number>];
}

/** Plasma velocity (vx, vy, vz) between two vector magnetograms dt seconds apart. */
export function vectorAffineVelocity(
  pair: VectorPair, nx: number, ny: number, dx: number, dy: number, dtS: number, options: AffineOptions,
): VectorAffineVelocity {
  const { mid, rate } = options.midAndRate ?? midAndRate(pair.bn[0], pair.bn[1], dtS);
  const gx = derivativeX(mid, nx, ny), gy = derivativeY(mid, nx, ny);
  const n = nx * ny;
  const hx = new Float64Array(n), hy = new Float64Array(n);
  for (let i = 0; i < n; i++) {
    hx[i] = (0.5 * (pair.bx[0][i] + pair.bx[1][i])) / dx;
    hy[i] = (0.5 * (pair.by[0][i] + pair.by[1][i])) / dy;
  }
  const div = derivativeX(hx, nx, ny);
  const dhy = derivativeY(hy, nx, ny);
  for (let i = 0; i < n; i++) div[i] += dhy[i];
  // Noise of Hx = Bx/dx, Hy = By/dy (mid-time: sigma^2/2) and of D, the sum of their derivatives.
  let noise: number[] | undefined;
  if (options.noise) {
    const st = options.noise.bt ?? options.noise.bn;
    const hx2 = (st * st) / 2 / (dx * dx), hy2 = (st * st) / 2 / (dy * dy);
    noise = [...daveNoiseVariance(options.noise.bn, dtS), hx2, hy2, (hx2 + hy2) * DERIVATIVE_NOISE_GAIN];
  }
  const fit = affineWindowFit([gx, gy, mid, rate, hx, hy, div], nx, ny, VECTOR_COLUMNS, DAVE_TARGET,
    options.sigma, options.minPivot, [6, 7, 8], [GRADIENT_RIDGE, GRADIENT_RIDGE, ...DAVE_RIDGE, 0], options.solveAt, noise, fitOptionsOf(options));
  const [u, v, w] = fit.params;
  for (const i of fit.centres) { // NaN elsewhere
    u[i] *= dx * KM_PER_MM;
    v[i] *= dy * KM_PER_MM;
    w[i] *= KM_PER_MM; // Mm/s -> km/s
  }
  return { vx: u, vy: v, vz: w, illConditioned: fit.illConditioned };
}
