// The footpoint velocity field used for the rate when the frames carry no velocity: each footpoint
// moves with its tracked rigid motion (a translation and, where its pattern shows one, a rotation
// about its centre), optionally plus the non-rigid part of the inferred field inside it; the flux around a
// footpoint that lies below the segmentation threshold moves with the footpoint it hangs from;
// elsewhere the inferred field is kept. So the spin and orbit of a footpoint come from what its
// track measures (Longcope, Ravindra & Barnes 2007 split the injection the same way, by
// footpoint), and the affine estimators' smoothing over their window, which blurs a footpoint's
// rotation and its motion relative to a neighbour, does not enter them.
//
// Rigid motion about a centre c: u(x) = U + omega z x (x - c)  (counter-clockwise seen from the
// corona for omega > 0). The non-rigid part of the inferred field is what remains after taking away
// its own |Bn|-weighted rigid fit over the footpoint, so a round footpoint whose rotation cannot be
// seen gets no rotation from anywhere.
//
// NaN policy: pixels where Bn is NaN get NaN velocity. Pixels with field but no velocity from any
// of the three sources are taken as still (u = 0): their flux stays in the potential A_p that
// every other pixel feels (dropping it would bias everyone's rate), and the share of the flux
// above `fieldFloorG` so treated is reported as left out.

import type { Grid } from '../grid.js';
import { KM_PER_MM } from '../units.js';

/** A footpoint's rigid motion over a frame pair. */
export interface RigidMotion {
  /** Translation, km/s. */
  readonly ux: number;
  readonly uy: number;
  /** Rotation rate about (cx, cy), rad/s; null when it cannot be seen (then no rotation is put on it). */
  readonly omega: number | null;
  /** Centre of the rotation, Mm. */
  readonly cx: number;
  readonly cy: number;
}

export interface FootpointVelocityOptions {
  /**
   * Keep the non-rigid part of the inferred field inside footpoints (default false: on rigidly
   * moving scenes with 8 G noise it added a spurious spin to round translating spots and 2.5 times
   * the scatter of the total, see docs/velocity.md).
   */
  readonly keepNonRigid?: boolean;
  /** How far (pixels) a footpoint's own flux below the threshold is followed from its edge (default 8). */
  readonly tailPixels?: number;
  /** Pixels weaker than this (G) count as noise, not as flux left out (default 0). */
  readonly fieldFloorG?: number;
}

export interface FootpointVelocityField {
  /** Footpoint velocity, km/s; NaN where none. */
  readonly vx: Float64Array;
  readonly vy: Float64Array;
  /**
   * The footpoint labels grown into their tails (pixels of the footpoint's sign, reached from it
   * through such pixels within `tailPixels`): what the label split uses.
   */
  readonly labels: Int32Array;
  /** Per pixel: 1 rigid motion of its footpoint, 2 its tail, 3 inferred field, 0 none (taken as still). */
  readonly source: Uint8Array;
  /** Share of sum |Bn| over pixels above the field floor that got no velocity. */
  readonly leftOutFluxShare: number;
}

export const SOURCE_NONE = 0;
export const SOURCE_FOOTPOINT = 1;
export const SOURCE_TAIL = 2;
export const SOURCE_INFERRED = 3;

/**
 * Builds the velocity field. `labels` are the footpoint ids of the frame the rate is taken on (0 =
 * background), `motions` the rigid motion by id (footpoints without one keep the inferred field),
 * `inferred` the velocity inferred between the frames (km/s, NaN where none).
 */
export function footpointVelocityField(
  grid: Grid, bn: ArrayLike<number>, labels: Int32Array, motions: ReadonlyMap<number, RigidMotion>,
  inferred: { readonly vx: ArrayLike<number>; readonly vy: ArrayLike<number> }, options: FootpointVelocityOptions = {},
): FootpointVelocityField {
  const { nx, ny, dx, dy } = grid;
  const n = nx * ny;
  const keepNonRigid = options.keepNonRigid ?? false;
  const grown = growIntoTails(grid, bn, labels, options.tailPixels ?? 8);
  const nonRigid = keepNonRigid ? nonRigidPart(grid, bn, labels, inferred) : undefined;
  const vx = new Float64Array(n).fill(NaN), vy = new Float64Array(n).fill(NaN);
  const source = new Uint8Array(n);
  let all = 0, leftOut = 0;
  const floor = options.fieldFloorG ?? 0;
  for (let i = 0; i < n; i++) {
    const b = bn[i];
    if (!Number.isFinite(b)) continue;
    const id = grown[i];
    const m = id > 0 ? motions.get(id) : undefined;
    if (m) {
      const w = m.omega ?? 0;
      // omega (rad/s) times an offset in Mm gives Mm/s.
      const rx = (i % nx) * dx - m.cx, ry = Math.floor(i / nx) * dy - m.cy;
      vx[i] = m.ux - w * ry * KM_PER_MM;
      vy[i] = m.uy + w * rx * KM_PER_MM;
      if (labels[i] === id) {
        source[i] = SOURCE_FOOTPOINT;
        if (nonRigid && Number.isFinite(nonRigid.vx[i])) { vx[i] += nonRigid.vx[i]; vy[i] += nonRigid.vy[i]; }
      } else source[i] = SOURCE_TAIL;
    } else if (Number.isFinite(inferred.vx[i]) && Number.isFinite(inferred.vy[i])) {
      vx[i] = inferred.vx[i];
      vy[i] = inferred.vy[i];
      source[i] = SOURCE_INFERRED;
    }
    if (source[i] === SOURCE_NONE) { vx[i] = 0; vy[i] = 0; }
    const a = Math.abs(b);
    if (a < floor) continue;
    all += a;
    if (source[i] === SOURCE_NONE) leftOut += a;
  }
  return { vx, vy, labels: grown, source, leftOutFluxShare: all > 0 ? leftOut / all : 0 };
}

/**
 * Labels grown breadth-first into unlabelled pixels of the same sign, up to `steps` pixels from the
 * footpoint (4-connected steps); pixels reached by two footpoints at once go to the first (raster
 * order of the front), which splits a shared tail about halfway.
 */
export function growIntoTails(grid: Grid, bn: ArrayLike<number>, labels: Int32Array, steps: number): Int32Array {
  const { nx, ny } = grid;
  const out = Int32Array.from(labels);
  const sign = new Map<number, number>();
  let front: number[] = [];
  for (let i = 0; i < out.length; i++) {
    const l = out[i];
    if (l <= 0) continue;
    if (!sign.has(l) && Number.isFinite(bn[i]) && bn[i] !== 0) sign.set(l, Math.sign(bn[i]));
    front.push(i);
  }
  for (let step = 0; step < steps && front.length > 0; step++) {
    const next: number[] = [];
    // One closure per step, not per front pixel (those were most of this function's garbage).
    const visit = (j: number, l: number, s: number) => {
      if (out[j] !== 0) return;
      const b = bn[j];
      if (!(Number.isFinite(b) && Math.sign(b) === s)) return;
      out[j] = l;
      next.push(j);
    };
    for (const i of front) {
      const l = out[i], s = sign.get(l);
      if (s === undefined) continue;
      const x = i % nx, y = (i - x) / nx;
      if (x > 0) visit(i - 1, l, s);
      if (x < nx - 1) visit(i + 1, l, s);
      if (y > 0) visit(i - nx, l, s);
      if (y < ny - 1) visit(i + nx, l, s);
    }
    front = next;
  }
  return out;
}

/**
 * The inferred field minus its own rigid fit over each footpoint (|Bn|-weighted least squares:
 * mean velocity, then the rotation rate sum w r x (u - U) / sum w r^2 about the weighted centre).
 * NaN outside footpoints and where the inferred field is NaN.
 */
export function nonRigidPart(
  grid: Grid, bn: ArrayLike<number>, labels: Int32Array, inferred: { readonly vx: ArrayLike<number>; readonly vy: ArrayLike<number> },
): { vx: Float64Array; vy: Float64Array } {
  const { nx, dx, dy } = grid;
  const n = labels.length;
  type Acc = { w: number; wx: number; wy: number; wu: number; wv: number; wxx: number; wyy: number; wxv: number; wyu: number };
  const acc = new Map<number, Acc>();
  const usable = (i: number) => labels[i] > 0 && Number.isFinite(bn[i]) && Number.isFinite(inferred.vx[i]) && Number.isFinite(inferred.vy[i]);
  for (let i = 0; i < n; i++) {
    if (!usable(i)) continue;
    let a = acc.get(labels[i]);
    if (!a) { a = { w: 0, wx: 0, wy: 0, wu: 0, wv: 0, wxx: 0, wyy: 0, wxv: 0, wyu: 0 }; acc.set(labels[i], a); }
    const w = Math.abs(bn[i]), x = (i % nx) * dx, y = Math.floor(i / nx) * dy, u = inferred.vx[i], v = inferred.vy[i];
    a.w += w; a.wx += w * x; a.wy += w * y; a.wu += w * u; a.wv += w * v;
    a.wxx += w * x * x; a.wyy += w * y * y; a.wxv += w * x * v; a.wyu += w * y * u;
  }
  // Per footpoint: U, V, the centre and omega (in km/s per Mm).
  const fit = new Map<number, { U: number; V: number; cx: number; cy: number; omega: number }>();
  for (const [l, a] of acc) {
    if (!(a.w > 0)) continue;
    const cx = a.wx / a.w, cy = a.wy / a.w, U = a.wu / a.w, V = a.wv / a.w;
    // Central moments: sum w (x - cx) (v - V) = wxv - cx wv - V wx + w cx V = wxv - w cx V.
    const sxv = a.wxv - a.w * cx * V, syu = a.wyu - a.w * cy * U;
    const srr = a.wxx - a.w * cx * cx + a.wyy - a.w * cy * cy;
    fit.set(l, { U, V, cx, cy, omega: srr > 0 ? (sxv - syu) / srr : 0 });
  }
  const vx = new Float64Array(n).fill(NaN), vy = new Float64Array(n).fill(NaN);
  for (let i = 0; i < n; i++) {
    if (!usable(i)) continue;
    const f = fit.get(labels[i]);
    if (!f) continue;
    const rx = (i % nx) * dx - f.cx, ry = Math.floor(i / nx) * dy - f.cy;
    vx[i] = inferred.vx[i] - (f.U - f.omega * ry);
    vy[i] = inferred.vy[i] - (f.V + f.omega * rx);
  }
  return { vx, vy };
}
