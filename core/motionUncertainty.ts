// The 1-sigma of the rate, spin and orbit from the errors of the footpoint motions the velocity
// field was built from (core/footpoints/footpointVelocity.ts). The rate is linear in the velocity:
// in the G_A form (Pariat, Demoulin & Berger 2005) dH/dt = -2 Sum_i (A_p . u_i) Bn_i dS, so
//   d(dH/dt)/du_i = -2 A_p(i) Bn_i dS,
// and a footpoint moving rigidly with u = U + omega z x (x - c) has the sensitivities
//   dT/dU = Sum_{i in k} d(dH/dt)/du_i,   dT/domega = Sum_{i in k} d(dH/dt)/du_i . (z x (x_i - c)).
// Its spin is exactly -(omega/2pi) (Phi_k^2 - Sum_i Phi_i^2) for a rigid rotation (every pixel
// pair turns at omega; a pixel is not paired with itself), so d spin_k / d omega is that over omega, and a translation leaves the spin unchanged. The orbit
// is the part of the pairs between labelled pixels that is not spin: its sensitivities come from
// A_p of the labelled field alone (so a lone footpoint's orbit has none: its own field exerts no
// net pull on it). Errors of different footpoints are independent (separate fits).

import type { FluxTransport } from './fluxTransport.js';
import type { Grid } from './grid.js';
import type { FluxKernel } from './fluxKernel.js';
import type { KernelConvolutions } from './helicityFlux.js';
import { convolveField } from './helicityFlux.js';
import { CM_PER_KM, KM_PER_MM, pixelAreaCm2 } from './units.js';

/** What the uncertainty needs of a measured motion. */
export interface MotionCovariance {
  /** Translation errors, km/s, and their correlation. */
  readonly uxError: number;
  readonly uyError: number;
  readonly uCorrelation: number;
  /** Rotation rate error, rad/s (null when no rotation was put on the footpoint). */
  readonly omegaError: number | null;
  /** Rotation centre, Mm. */
  readonly cx: number;
  readonly cy: number;
}

/**
 * sigma (Mx^2/s) of total, spin and orbit from the motions of the footpoints labelled in `labels`.
 * `labelledField`: Kx * Bn and Ky * Bn of the labelled pixels when already made (the label split
 * makes them: LabelSplit.labelledField), read on labelled pixels only.
 */
export function rateSigmaFromMotions(
  t: FluxTransport, conv: KernelConvolutions, labels: Int32Array, motions: ReadonlyMap<number, MotionCovariance>, grid: Grid,
  kernel: FluxKernel, labelledField?: { readonly p: Float64Array; readonly q: Float64Array },
): { total: number; spin: number; orbit: number } {
  const area = pixelAreaCm2(grid.dx, grid.dy);
  const k = (2 * CM_PER_KM * area) / (2 * Math.PI);
  const own = labelledField ?? labelledConvolution(t, labels, grid, kernel);
  // Per-footpoint sums in typed arrays (the pixel loop in a function of its own: a map of
  // objects with number fields made a boxed number per update wherever the loop ran unoptimised).
  const ids = [...motions.keys()].filter((l) => l > 0).sort((x, y) => x - y);
  const acc = sensitivitySums(t, conv, own, labels, motions, ids, grid, k, area);
  let total = 0, spin = 0, orbit = 0;
  // Footpoints in the order their first pixel comes in the raster (the order of the sums before).
  for (const e of acc.order) {
    const m = motions.get(ids[e])!;
    const a = {
      sx: acc.sums[e * 8], sy: acc.sums[e * 8 + 1], r: acc.sums[e * 8 + 2], lx: acc.sums[e * 8 + 3],
      ly: acc.sums[e * 8 + 4], lr: acc.sums[e * 8 + 5], flux: acc.sums[e * 8 + 6], self: acc.sums[e * 8 + 7],
    };
    const shift = (gx: number, gy: number) => (gx * m.uxError) ** 2 + (gy * m.uyError) ** 2 + 2 * gx * gy * m.uCorrelation * m.uxError * m.uyError;
    const so = m.omegaError ?? 0;
    const dSpin = -(a.flux * a.flux - a.self) / (2 * Math.PI);
    total += shift(a.sx, a.sy) + (a.r * so) ** 2;
    spin += (dSpin * so) ** 2;
    orbit += shift(a.lx, a.ly) + ((a.lr - dSpin) * so) ** 2;
  }
  return { total: Math.sqrt(total), spin: Math.sqrt(spin), orbit: Math.sqrt(orbit) };
}

/** Kx * Bn and Ky * Bn of the labelled pixels alone, on the rows that hold one (read there only). */
function labelledConvolution(t: FluxTransport, labels: Int32Array, grid: Grid, kernel: FluxKernel): { p: Float64Array; q: Float64Array } {
  const { bn, valid } = t;
  const labelled = new Float64Array(bn.length);
  const rows = new Uint8Array(grid.ny);
  for (let i = 0; i < bn.length; i++) if (labels[i] > 0 && valid[i]) { labelled[i] = bn[i]; rows[(i - (i % grid.nx)) / grid.nx] = 1; }
  return convolveField(kernel, labelled, rows);
}

/**
 * Per footpoint with a motion (ids[e], ascending), over its valid labelled pixels in raster order:
 * sums[8e ..] = d(dH/dt)/dU (x, y), d/domega, the same for the labelled pairs only, flux, sum of
 * squared pixel fluxes; `order`: the footpoints with a pixel, in the order of their first pixel.
 */
function sensitivitySums(
  t: FluxTransport, conv: KernelConvolutions, own: { readonly p: Float64Array; readonly q: Float64Array },
  labels: Int32Array, motions: ReadonlyMap<number, MotionCovariance>, ids: readonly number[], grid: Grid, k: number, area: number,
): { sums: Float64Array; order: number[] } {
  const { nx, dx, dy } = grid;
  const { bn, valid } = t;
  const { p, q } = conv;
  const slotOf = new Map<number, number>();
  ids.forEach((l, e) => slotOf.set(l, e));
  const cx = new Float64Array(ids.length), cy = new Float64Array(ids.length);
  ids.forEach((l, e) => { const m = motions.get(l)!; cx[e] = m.cx; cy[e] = m.cy; });
  const sums = new Float64Array(8 * ids.length);
  const seen = new Uint8Array(ids.length);
  const order: number[] = [];
  let last = 0, slot = -1;
  for (let i = 0; i < labels.length; i++) {
    const l = labels[i];
    if (l <= 0 || !valid[i]) continue;
    if (l !== last) { last = l; slot = slotOf.get(l) ?? -1; }
    if (slot < 0) continue;
    if (!seen[slot]) { seen[slot] = 1; order.push(slot); }
    // d(dH/dt)/du_x and /du_y of this pixel, Mx^2/s per km/s; the same for the labelled pairs only.
    const gx = k * bn[i] * q[i], gy = -k * bn[i] * p[i];
    const hx = k * bn[i] * own.q[i], hy = -k * bn[i] * own.p[i];
    const rx = ((i % nx) * dx - cx[slot]) * KM_PER_MM, ry = (Math.floor(i / nx) * dy - cy[slot]) * KM_PER_MM;
    const o = 8 * slot;
    sums[o] += gx;
    sums[o + 1] += gy;
    sums[o + 2] += -gx * ry + gy * rx;
    sums[o + 3] += hx;
    sums[o + 4] += hy;
    sums[o + 5] += -hx * ry + hy * rx;
    sums[o + 6] += bn[i] * area;
    sums[o + 7] += (bn[i] * area) ** 2;
  }
  return { sums, order };
}
