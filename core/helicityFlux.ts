// Helicity flux through the boundary z = 0 (Berger & Field 1984; Pariat, Demoulin & Berger 2005).
//
//   G_theta(x) = -(Bn/2pi) Int [(x - x') x (u - u')]_z / |x - x'|^2 Bn' dS'
//   G_A(x)     = -2 (A_p . u) Bn,   A_p = (1/2pi) z x Int Bn' (x - x') / |x - x'|^2 dS'
//
// With K = (x/r^2, y/r^2) and F = Bn u, expanding the cross product gives three convolutions,
//   P = Kx * Bn,  Q = Ky * Bn,  R = Kx * Fy - Ky * Fx,
// and then  G_theta = -(1/2pi) (Fy P - Fx Q - Bn R),  A_p = (1/2pi) (-Q, P),
//           G_A     = -(1/pi) (Fy P - Fx Q).
// Three forward and three inverse padded FFTs in all. Units: G_theta and G_A in Mx^2 cm^-2 s^-1
// (per unit area of boundary), totals in Mx^2/s, A_p in Mx/cm (G cm).

import type { FluxKernel } from './fluxKernel.js';
import type { FluxTransport } from './fluxTransport.js';
import { createSpectrum, forwardPadded, inversePadded } from './paddedTransform.js';
import { CM_PER_KM, pixelAreaCm2 } from './units.js';

export interface KernelConvolutions {
  /** Kx * Bn and Ky * Bn, G cm. */
  readonly p: Float64Array;
  readonly q: Float64Array;
  /** Kx * Fy - Ky * Fx, G cm km/s. */
  readonly r: Float64Array;
}

/** Multiplies a spectrum by i*k (k real, per frequency) into `out`; out may alias `s`. */
function timesIK(k: Float64Array, sre: Float64Array, sim: Float64Array, ore: Float64Array, oim: Float64Array): void {
  for (let i = 0; i < k.length; i++) {
    const a = sre[i], b = sim[i], c = k[i];
    ore[i] = -c * b;
    oim[i] = c * a;
  }
}

/** P and Q: the convolutions of bn with the kernel (what A_p needs). */
export function convolveField(kernel: FluxKernel, bn: ArrayLike<number>): { p: Float64Array; q: Float64Array } {
  const { plan, kxIm, kyIm, nx, ny } = kernel;
  const sb = createSpectrum(plan);
  const work = createSpectrum(plan);
  forwardPadded(plan, bn, nx, ny, sb);
  const p = new Float64Array(nx * ny);
  const q = new Float64Array(nx * ny);
  timesIK(kxIm, sb.re, sb.im, work.re, work.im);
  inversePadded(plan, work, p);
  timesIK(kyIm, sb.re, sb.im, work.re, work.im);
  inversePadded(plan, work, q);
  return { p, q };
}

/** P, Q and R for a flux transport (what G_theta needs). */
export function convolveTransport(kernel: FluxKernel, t: { bn: ArrayLike<number>; fx: ArrayLike<number>; fy: ArrayLike<number> }): KernelConvolutions {
  const { plan, kxIm, kyIm, nx, ny } = kernel;
  const { p, q } = convolveField(kernel, t.bn);
  const sx = createSpectrum(plan);
  const sy = createSpectrum(plan);
  forwardPadded(plan, t.fx, nx, ny, sx);
  forwardPadded(plan, t.fy, nx, ny, sy);
  // R^ = i kx Fy^ - i ky Fx^, written into sx.
  const { re: xr, im: xi } = sx;
  const { re: yr, im: yi } = sy;
  for (let i = 0; i < kxIm.length; i++) {
    const a = kxIm[i], b = kyIm[i];
    const re = -a * yi[i] + b * xi[i];
    const im = a * yr[i] - b * xr[i];
    xr[i] = re;
    xi[i] = im;
  }
  const r = new Float64Array(nx * ny);
  inversePadded(plan, sx, r);
  return { p, q, r };
}

export interface HelicityFluxResult {
  /** G_theta density, Mx^2 cm^-2 s^-1; NaN where the pixel had no data. */
  readonly gTheta: Float64Array;
  /** G_A density, Mx^2 cm^-2 s^-1; NaN where the pixel had no data. */
  readonly gA: Float64Array;
  /** Coulomb-gauge potential A_p, G cm; NaN where no data. */
  readonly apx: Float64Array;
  readonly apy: Float64Array;
  /** Integral of G_theta over the boundary, Mx^2/s. */
  readonly total: number;
  /** Integral of G_A, Mx^2/s (equals total to rounding). */
  readonly totalGa: number;
  readonly maskedFraction: number;
}

/** The maps G_theta, G_A and A_p and their totals for one flux transport. */
export function helicityFlux(kernel: FluxKernel, t: FluxTransport): HelicityFluxResult {
  return helicityFluxFromConvolutions(kernel, t, convolveTransport(kernel, t));
}

/** The same from convolutions already made (so that callers can reuse them). */
export function helicityFluxFromConvolutions(kernel: FluxKernel, t: FluxTransport, conv: KernelConvolutions): HelicityFluxResult {
  const { p, q, r } = conv;
  const n = kernel.nx * kernel.ny;
  const gTheta = new Float64Array(n);
  const gA = new Float64Array(n);
  const apx = new Float64Array(n);
  const apy = new Float64Array(n);
  const c = CM_PER_KM / (2 * Math.PI); // F is in G km/s
  let total = 0, totalGa = 0;
  const { bn, fx, fy, valid } = t;
  for (let i = 0; i < n; i++) {
    if (valid[i] === 0) {
      gTheta[i] = NaN; gA[i] = NaN; apx[i] = NaN; apy[i] = NaN;
      continue;
    }
    const s = fy[i] * p[i] - fx[i] * q[i];
    const g = -c * (s - bn[i] * r[i]);
    const ga = -2 * c * s;
    gTheta[i] = g;
    gA[i] = ga;
    total += g;
    totalGa += ga;
    apx[i] = -q[i] / (2 * Math.PI);
    apy[i] = p[i] / (2 * Math.PI);
  }
  const area = pixelAreaCm2(kernel.dx, kernel.dy);
  return { gTheta, gA, apx, apy, total: total * area, totalGa: totalGa * area, maskedFraction: t.maskedFraction };
}

/** Only the total from G_theta, without keeping the maps: the cheapest call for a rate. */
export function helicityFluxTotal(kernel: FluxKernel, t: FluxTransport): number {
  const { p, q, r } = convolveTransport(kernel, t);
  const { bn, fx, fy, valid } = t;
  let total = 0;
  for (let i = 0; i < bn.length; i++) {
    if (valid[i] !== 0) total += fy[i] * p[i] - fx[i] * q[i] - bn[i] * r[i];
  }
  return (-CM_PER_KM / (2 * Math.PI)) * total * pixelAreaCm2(kernel.dx, kernel.dy);
}
