// Helicity flux through the boundary z = 0 (Berger & Field 1984; Pariat, Demoulin & Berger 2005).
//
//   G_theta(x) = -(Bn/2pi) Int [(x - x') x (u - u')]_z / |x - x'|^2 Bn' dS'
//   G_A(x)     = -2 (A_p . u) Bn,   A_p = (1/2pi) z x Int Bn' (x - x') / |x - x'|^2 dS'
//
// With K = (x/r^2, y/r^2) and F = Bn u, expanding the cross product gives three convolutions,
//   P = Kx * Bn,  Q = Ky * Bn,  R = Kx * Fy - Ky * Fx,
// and then  G_theta = -(1/2pi) (Fy P - Fx Q - Bn R),  A_p = (1/2pi) (-Q, P),
//           G_A     = -(1/pi) (Fy P - Fx Q).
// Three forward and three inverse padded FFTs in all (core/paddedTransform.ts convolvePadded). Units: G_theta and G_A in Mx^2 cm^-2 s^-1
// (per unit area of boundary), totals in Mx^2/s, A_p in Mx/cm (G cm).

import type { FluxKernel } from './fluxKernel.js';
import { kernelWorkspace } from './fluxKernel.js';
import type { FluxTransport } from './fluxTransport.js';
import { SPECTRUM_BLOCK, convolvePadded } from './paddedTransform.js';
import { CM_PER_KM, pixelAreaCm2 } from './units.js';

export interface KernelConvolutions {
  /** Kx * Bn and Ky * Bn, G cm. */
  readonly p: Float64Array;
  readonly q: Float64Array;
  /** Kx * Fy - Ky * Fx, G cm km/s. */
  readonly r: Float64Array;
}

/**
 * P and Q: the convolutions of bn with the kernel (what A_p needs). With `rows`, only the rows y
 * where rows[y] is non-zero are computed (the others are 0).
 */
export function convolveField(kernel: FluxKernel, bn: ArrayLike<number>, rows?: Uint8Array): { p: Float64Array; q: Float64Array } {
  const { plan, kxIm, kyIm, nx, ny } = kernel;
  const p = new Float64Array(nx * ny);
  const q = new Float64Array(nx * ny);
  const B = SPECTRUM_BLOCK;
  // P^ = i kx Bn^, Q^ = i ky Bn^.
  const work = kernelWorkspace(kernel), blockSize = plan.py * B;
  convolvePadded(plan, work, [bn], [p, q], (inRe, inIm, outRe, outIm, c0, width, rev) => {
    // By the SIMD kernel when the kernel and its workspace lie in its arena (the same products).
    const kb = c0 * plan.py;
    if (work.simd?.products('field', plan.cols, inRe, inIm, outRe, outIm, kxIm.subarray(kb, kb + blockSize), kyIm.subarray(kb, kb + blockSize), B, width)) return;
    const br = inRe[0], bi = inIm[0], pr = outRe[0], pi = outIm[0], qr = outRe[1], qi = outIm[1];
    for (let ky = 0; ky < plan.py; ky++) {
      const s = ky * B, t = rev[ky] * B, k = c0 * plan.py + s; // the kernel by column blocks (fluxKernel.ts)
      for (let c = 0; c < width; c++) {
        const a = kxIm[k + c], b = kyIm[k + c], re = br[s + c], im = bi[s + c];
        pr[t + c] = -a * im; pi[t + c] = a * re;
        qr[t + c] = -b * im; qi[t + c] = b * re;
      }
    }
  }, rows);
  return { p, q };
}

/**
 * P, Q and R for a flux transport (what G_theta needs). With `rows`, only the rows y where
 * rows[y] is non-zero are computed (the others are 0): for callers that read a few rows. With
 * `into`, the maps are written there (a caller convolving many times reuses one set).
 */
export function convolveTransport(
  kernel: FluxKernel, t: { bn: ArrayLike<number>; fx: ArrayLike<number>; fy: ArrayLike<number> }, rows?: Uint8Array,
  into?: KernelConvolutions,
): KernelConvolutions {
  const { plan, kxIm, kyIm, nx, ny } = kernel;
  const p = into?.p ?? new Float64Array(nx * ny);
  const q = into?.q ?? new Float64Array(nx * ny);
  const r = into?.r ?? new Float64Array(nx * ny);
  const B = SPECTRUM_BLOCK;
  // P^ = i kx Bn^, Q^ = i ky Bn^, R^ = i kx Fy^ - i ky Fx^.
  const work = kernelWorkspace(kernel), blockSize = plan.py * B;
  convolvePadded(plan, work, [t.bn, t.fx, t.fy], [p, q, r], (inRe, inIm, outRe, outIm, c0, width, rev) => {
    // By the SIMD kernel when the kernel and its workspace lie in its arena (the same products).
    const kb = c0 * plan.py;
    if (work.simd?.products('transport', plan.cols, inRe, inIm, outRe, outIm, kxIm.subarray(kb, kb + blockSize), kyIm.subarray(kb, kb + blockSize), B, width)) return;
    const br = inRe[0], bi = inIm[0], xr = inRe[1], xi = inIm[1], yr = inRe[2], yi = inIm[2];
    const pr = outRe[0], pi = outIm[0], qr = outRe[1], qi = outIm[1], rr = outRe[2], ri = outIm[2];
    for (let ky = 0; ky < plan.py; ky++) {
      const s = ky * B, o = rev[ky] * B, k = c0 * plan.py + s; // the kernel by column blocks (fluxKernel.ts)
      for (let c = 0; c < width; c++) {
        const a = kxIm[k + c], b = kyIm[k + c], re = br[s + c], im = bi[s + c];
        pr[o + c] = -a * im; pi[o + c] = a * re;
        qr[o + c] = -b * im; qi[o + c] = b * re;
        rr[o + c] = -a * yi[s + c] + b * xi[s + c];
        ri[o + c] = a * yr[s + c] - b * xr[s + c];
      }
    }
  }, rows);
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
  const n = kernel.nx * kernel.ny;
  const gTheta = new Float64Array(n);
  const gA = new Float64Array(n);
  const apx = new Float64Array(n);
  const apy = new Float64Array(n);
  const totals = new Float64Array(2);
  fluxDensities(conv.p, conv.q, conv.r, t.bn, t.fx, t.fy, t.valid, gTheta, gA, apx, apy, totals);
  const area = pixelAreaCm2(kernel.dx, kernel.dy);
  return { gTheta, gA, apx, apy, total: totals[0] * area, totalGa: totals[1] * area, maskedFraction: t.maskedFraction };
}

/**
 * The pixel loop of helicityFluxFromConvolutions, alone in a function of arrays and numbers: a
 * function called once per frame is optimised inside its loop, and code after the loop that makes
 * objects made that optimised code fall back every frame (V8 deoptimised it at the result object).
 * totals: [sum of G_theta, sum of G_A] before the pixel area.
 */
function fluxDensities(
  p: Float64Array, q: Float64Array, r: Float64Array, bn: Float64Array, fx: Float64Array, fy: Float64Array, valid: Uint8Array,
  gTheta: Float64Array, gA: Float64Array, apx: Float64Array, apy: Float64Array, totals: Float64Array,
): void {
  const c = CM_PER_KM / (2 * Math.PI); // F is in G km/s
  let total = 0, totalGa = 0;
  for (let i = 0; i < gTheta.length; i++) {
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
  totals[0] = total;
  totals[1] = totalGa;
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
