// With vector data the injection splits into an emergence and a shear term (Berger & Field
// 1984; Kusano et al. 2002):
//   dH/dt = 2 Int (A_p . B_t) v_n dS  -  2 Int (A_p . v_t) B_n dS
// Both use the Coulomb-gauge A_p of the normal field; their sum equals the G_A total.

import type { Frame } from './frame.js';
import { CM_PER_KM, pixelAreaCm2 } from './units.js';

export interface EmergenceShear {
  /** 2 Int (A_p . B_t) v_n dS, Mx^2/s. */
  readonly emergence: number;
  /** -2 Int (A_p . v_t) B_n dS, Mx^2/s. */
  readonly shear: number;
}

/**
 * The two terms from A_p (G cm, as from helicityFlux) and the frame's bx, by, vx, vy, vz. Pixels
 * where any input is NaN are left out (the same pixels the flux transport leaves out).
 */
export function emergenceShear(frame: Frame, apx: ArrayLike<number>, apy: ArrayLike<number>): EmergenceShear | undefined {
  const { bx, by, vx, vy, vz, bn } = frame;
  if (!bx || !by || !vx || !vy || !vz) return undefined;
  let e = 0, s = 0;
  for (let i = 0; i < bn.length; i++) {
    const ax = apx[i], ay = apy[i];
    const pe = 2 * (ax * bx[i] + ay * by[i]) * vz[i];
    const ps = -2 * (ax * vx[i] + ay * vy[i]) * bn[i];
    if (Number.isFinite(pe) && Number.isFinite(ps)) { e += pe; s += ps; }
  }
  const k = CM_PER_KM * pixelAreaCm2(frame.dx, frame.dy);
  return { emergence: e * k, shear: s * k };
}

/**
 * The emergence term alone, 2 Int (A_p . B_t) v_n dS (Mx^2/s), over the pixels where every input is
 * finite: for a velocity field given as the footpoint velocity u, whose shear term is then the total
 * rate minus this one (u carries both: Bn u = Bn v_t - v_n B_t).
 */
export function emergenceTerm(
  apx: ArrayLike<number>, apy: ArrayLike<number>, bx: ArrayLike<number>, by: ArrayLike<number>, vz: ArrayLike<number>, dx: number, dy: number,
): number {
  let e = 0;
  for (let i = 0; i < apx.length; i++) {
    const pe = 2 * (apx[i] * bx[i] + apy[i] * by[i]) * vz[i];
    if (Number.isFinite(pe)) e += pe;
  }
  return e * CM_PER_KM * pixelAreaCm2(dx, dy);
}
