// The rotation of a footpoint from its pattern alone: the angle phi (with a shift and a gain) that
// best maps the footpoint's field in one frame onto the next,
//
//   f1(x) ~ g f2(c2 + t + R(phi) (x - c1))   over the footpoint's pixels in frame 1 and a ring around them,
//
// found by a coarse scan over phi and Gauss-Newton refinement with bicubic sampling (sub-degree).
// A footpoint without angular structure (round, axisymmetric) cannot show a rotation: that is
// reported as a reason, never as a number. Angles are counter-clockwise seen from the corona.

import type { Grid } from '../grid.js';
import { sampleCubic, sampleCubicValue } from './cubicSample.js';

export type PatternNote = 'axisymmetric' | 'too-small' | 'too-noisy' | 'poor-fit';

export interface PatternRotationOptions {
  /** Background pixels within this many pixels of the footpoint join the fit window (default 2; none with coreShare). */
  readonly marginPixels?: number;
  /**
   * Fit only the footpoint's core: its pixels where |field| is at least this share of its peak
   * (default 0: all its pixels and the margin). The tail of a neighbour that moves otherwise lies
   * mostly at a footpoint's edge, where it reads as a rotation of the footpoint; the core is
   * where the footpoint's own field dominates.
   */
  readonly coreShare?: number;
  /** Largest rotation looked for between two frames, rad (default 20 degrees). */
  readonly maxAngle?: number;
  /**
   * Least angular structure for a rotation to be visible: rms of the angular derivative of the
   * pattern over the rms of its radial derivative (default 0.05; below 0.01 for a sampled round
   * Gaussian, 0.04 for axis ratio 1.06, 0.08 for 1.12, 0.15 for 1.25).
   */
  readonly minAnisotropy?: number;
  /** Largest 1-sigma error of the fitted angle for it to count as seen, rad (default 1 degree). */
  readonly maxAngleError?: number;
  /** Largest rms misfit relative to the rms pattern (default 0.5). */
  readonly maxMisfit?: number;
  /**
   * Pixels per independent noise sample (default 1). Smoothing by a Gaussian of s pixels makes
   * neighbouring residuals alike over about 4 pi s^2 pixels; the angle error grows by its square root.
   */
  readonly noiseCorrelation?: number;
  /**
   * Noise of each frame's raw map, G. When given, the errors come from it (the residual of a fit
   * to two noisy frames has variance 2 noise^2 per independent sample) instead of from the fit's
   * own residual, which also holds any change of the pattern that is not a rigid motion: such a
   * misfit is a bias of the model, not a scatter over noise realisations.
   */
  readonly noiseG?: number;
}

export const PATTERN_ROTATION_DEFAULTS = {
  marginPixels: 2,
  coreShare: 0,
  maxAngle: (20 * Math.PI) / 180,
  minAnisotropy: 0.05,
  maxAngleError: Math.PI / 180,
  maxMisfit: 0.5,
  noiseCorrelation: 1,
} as const;

export interface PatternFootprint {
  /** Map and labels of the frame. */
  readonly field: ArrayLike<number>;
  readonly labels: Int32Array;
  /** The footpoint's label in that map. */
  readonly label: number;
  /** Its centroid, Mm. */
  readonly x: number;
  readonly y: number;
  /** Its bounding box, pixels inclusive. */
  readonly box: { readonly x0: number; readonly x1: number; readonly y0: number; readonly y1: number };
}

export interface PatternRotation {
  /** Rotation from frame 1 to frame 2, rad (null when it cannot be seen). */
  readonly angle: number | null;
  /** 1-sigma error of the angle, rad (null when no fit was made). */
  readonly angleError: number | null;
  /**
   * Displacement of the footprint's centre from frame 1 to frame 2, Mm: b's centre plus the fitted
   * shift, minus a's centre (null when no fit converged). Fitted also when the angle cannot be
   * seen (then with the angle held at 0).
   */
  readonly shift: { readonly x: number; readonly y: number } | null;
  /** 1-sigma errors of the shift, Mm, and their correlation (null with `shift`). */
  readonly shiftError: { readonly x: number; readonly y: number; readonly correlation: number } | null;
  /** Why no angle is given. */
  readonly note: PatternNote | null;
  readonly anisotropy: number;
  /** rms residual over rms pattern of the best fit (NaN when no fit was made). */
  readonly misfit: number;
  /** Pixels in the fit window. */
  readonly samples: number;
}

/** Pixels of the fit window: the footpoint and unlabelled pixels within `margin` of it, or its core. */
function fitWindow(fp: PatternFootprint, nx: number, ny: number, margin: number, coreShare: number): number[] {
  const { labels, label, box, field } = fp;
  if (coreShare > 0) {
    let peak = 0;
    for (let y = box.y0; y <= box.y1; y++) for (let x = box.x0; x <= box.x1; x++) {
      const i = y * nx + x;
      if (labels[i] === label && Math.abs(field[i]) > peak) peak = Math.abs(field[i]);
    }
    const core: number[] = [];
    for (let y = box.y0; y <= box.y1; y++) for (let x = box.x0; x <= box.x1; x++) {
      const i = y * nx + x;
      if (labels[i] === label && Math.abs(field[i]) >= coreShare * peak) core.push(i);
    }
    return core;
  }
  const x0 = Math.max(0, box.x0 - margin), x1 = Math.min(nx - 1, box.x1 + margin);
  const y0 = Math.max(0, box.y0 - margin), y1 = Math.min(ny - 1, box.y1 + margin);
  const out: number[] = [];
  for (let y = y0; y <= y1; y++) {
    for (let x = x0; x <= x1; x++) {
      const i = y * nx + x;
      if (!Number.isFinite(field[i])) continue;
      const l = labels[i];
      if (l === label) { out.push(i); continue; }
      if (l !== 0) continue;
      let near = false;
      for (let yy = Math.max(0, y - margin); yy <= Math.min(ny - 1, y + margin) && !near; yy++) {
        for (let xx = Math.max(0, x - margin); xx <= Math.min(nx - 1, x + margin); xx++) {
          if (labels[yy * nx + xx] === label) { near = true; break; }
        }
      }
      if (near) out.push(i);
    }
  }
  return out;
}

/** Solves the symmetric 4x4 system A p = b in place (Gaussian elimination); false if singular. */
function solve4(A: Float64Array, b: Float64Array, p: Float64Array): boolean {
  const m = new Float64Array(A), r = new Float64Array(b);
  for (let c = 0; c < 4; c++) {
    let piv = c;
    for (let k = c + 1; k < 4; k++) if (Math.abs(m[k * 4 + c]) > Math.abs(m[piv * 4 + c])) piv = k;
    if (!(Math.abs(m[piv * 4 + c]) > 1e-300)) return false;
    if (piv !== c) {
      for (let k = 0; k < 4; k++) { const t = m[c * 4 + k]; m[c * 4 + k] = m[piv * 4 + k]; m[piv * 4 + k] = t; }
      const t = r[c]; r[c] = r[piv]; r[piv] = t;
    }
    for (let k = c + 1; k < 4; k++) {
      const f = m[k * 4 + c] / m[c * 4 + c];
      for (let j = c; j < 4; j++) m[k * 4 + j] -= f * m[c * 4 + j];
      r[k] -= f * r[c];
    }
  }
  for (let c = 3; c >= 0; c--) {
    let s = r[c];
    for (let j = c + 1; j < 4; j++) s -= m[c * 4 + j] * p[j];
    p[c] = s / m[c * 4 + c];
  }
  return true;
}

/** Inverse of the symmetric 4x4 matrix (row-major), or null when singular. */
function inverse(A: Float64Array): Float64Array | null {
  const out = new Float64Array(16);
  const e = new Float64Array(4), p = new Float64Array(4);
  for (let c = 0; c < 4; c++) {
    e.fill(0);
    e[c] = 1;
    if (!solve4(A, e, p)) return null;
    for (let r = 0; r < 4; r++) out[r * 4 + c] = p[r];
  }
  return out;
}

/**
 * The rotation of footpoint `a` (frame 1) onto footpoint `b` (frame 2), both on `grid`.
 * Returns a note instead of an angle when the pattern cannot show a rotation.
 */
export function patternRotation(a: PatternFootprint, b: PatternFootprint, grid: Grid, options: PatternRotationOptions = {}): PatternRotation {
  const o = { ...PATTERN_ROTATION_DEFAULTS, ...options };
  const { nx, ny, dx, dy } = grid;
  const win = fitWindow(a, nx, ny, o.marginPixels, o.coreShare);
  const m = win.length;
  const u = new Float64Array(m), v = new Float64Array(m), f1 = new Float64Array(m);
  let sum1 = 0;
  for (let k = 0; k < m; k++) {
    const i = win[k];
    u[k] = (i % nx) * dx - a.x;
    v[k] = Math.floor(i / nx) * dy - a.y;
    f1[k] = a.field[i];
    sum1 += f1[k] * f1[k];
  }
  // Angular structure of the pattern: central differences at the window's pixels.
  let sAng = 0, sRad = 0;
  for (let k = 0; k < m; k++) {
    const i = win[k], x = i % nx, y = Math.floor(i / nx);
    if (x < 1 || y < 1 || x >= nx - 1 || y >= ny - 1) continue;
    const gx = (a.field[i + 1] - a.field[i - 1]) / (2 * dx);
    const gy = (a.field[i + nx] - a.field[i - nx]) / (2 * dy);
    if (!Number.isFinite(gx) || !Number.isFinite(gy)) continue;
    sAng += (u[k] * gy - v[k] * gx) ** 2;
    sRad += (u[k] * gx + v[k] * gy) ** 2;
  }
  const anisotropy = sRad > 0 ? Math.sqrt(sAng / sRad) : 0;
  // Fewer pixels than a 3x3 patch cannot pin down four parameters.
  if (m < 9) return { angle: null, angleError: null, shift: null, shiftError: null, note: 'too-small', anisotropy, misfit: NaN, samples: m };
  // Without angular structure the angle is held at 0 and only the shift (and gain) are fitted.
  const angleVisible = anisotropy >= o.minAnisotropy;

  // Cost at (phi, tx, ty) with the best gain; also fills the normal equations when asked.
  const JtJ = new Float64Array(16), Jtr = new Float64Array(4);
  const sums = new Float64Array(PATTERN_SUMS);
  const evaluate = (phi: number, tx: number, ty: number, gain: number | null, normal: boolean) => {
    patternSums(u, v, f1, b.field, nx, ny, dx, dy, b.x + tx, b.y + ty, phi, gain ?? 1, normal, JtJ, Jtr, sums);
    const s22 = sums[0], s12 = sums[1], s11 = sums[2], used = sums[3], rss = sums[4];
    if (normal) for (let p = 0; p < 4; p++) for (let q = 0; q < p; q++) JtJ[p * 4 + q] = JtJ[q * 4 + p];
    // With the best gain the residual is s11 - s12^2/s22.
    const bestGain = s22 > 0 ? s12 / s22 : 0;
    const cost = gain === null ? (s22 > 0 ? s11 - (s12 * s12) / s22 : s11) : rss;
    return { cost, used, bestGain, rss };
  };

  // Coarse scan in 2-degree steps: the misfit valley of a footpoint a few pixels across is far wider.
  const step = Math.PI / 90;
  let bestPhi = 0, bestCost = Infinity;
  const scanTo = angleVisible ? o.maxAngle : 0;
  for (let phi = -scanTo; phi <= scanTo + 1e-12; phi += step) {
    const { cost, used } = evaluate(phi, 0, 0, null, false);
    if (used >= 0.8 * m && cost < bestCost) { bestCost = cost; bestPhi = phi; }
  }
  if (!Number.isFinite(bestCost)) {
    return { angle: null, angleError: null, shift: null, shiftError: null, note: 'poor-fit', anisotropy, misfit: NaN, samples: m };
  }
  // Gauss-Newton on (phi, tx, ty, gain); phi held (its row and column made trivial) when not visible.
  const freeze = () => {
    if (angleVisible) return;
    for (let k = 0; k < 4; k++) { JtJ[k] = 0; JtJ[k * 4] = 0; }
    JtJ[0] = 1;
    Jtr[0] = 0;
  };
  const p = new Float64Array([bestPhi, 0, 0, evaluate(bestPhi, 0, 0, null, false).bestGain]);
  const d = new Float64Array(4);
  let last = evaluate(p[0], p[1], p[2], p[3], true);
  freeze();
  for (let iter = 0; iter < 20; iter++) {
    if (!solve4(JtJ, Jtr, d)) break;
    const trial = new Float64Array([p[0] - d[0], p[1] - d[1], p[2] - d[2], p[3] - d[3]]);
    const next = evaluate(trial[0], trial[1], trial[2], trial[3], true);
    if (!(next.rss <= last.rss * (1 + 1e-12)) || next.used < 0.8 * m) {
      // A worse step: go back to the last normal equations and stop.
      evaluate(p[0], p[1], p[2], p[3], true);
      freeze();
      break;
    }
    p.set(trial);
    last = next;
    freeze();
    if (Math.abs(d[0]) < 1e-9 && Math.abs(d[1]) < 1e-9 * Math.max(dx, dy) && Math.abs(d[2]) < 1e-9 * Math.max(dx, dy)) break;
  }
  const dof = Math.max(1, last.used - (angleVisible ? 4 : 3));
  const varianceScale = o.noiseG !== undefined && o.noiseG > 0
    ? 2 * o.noiseG * o.noiseG
    : (last.rss / dof) * Math.max(1, o.noiseCorrelation);
  const inv = inverse(JtJ);
  const misfit = Math.sqrt(last.rss / Math.max(sum1 * (last.used / m), 1e-300));
  const shiftOk = inv !== null && misfit <= o.maxMisfit;
  const sx = shiftOk ? Math.sqrt(varianceScale * inv[5]) : NaN, sy = shiftOk ? Math.sqrt(varianceScale * inv[10]) : NaN;
  const shift = shiftOk ? { x: b.x + p[1] - a.x, y: b.y + p[2] - a.y } : null;
  const shiftError = shiftOk ? { x: sx, y: sy, correlation: (varianceScale * inv[6]) / (sx * sy) } : null;
  if (!angleVisible) {
    return { angle: null, angleError: null, shift, shiftError, note: 'axisymmetric', anisotropy, misfit, samples: m };
  }
  const angleError = inv !== null ? Math.sqrt(varianceScale * inv[0]) : Infinity;
  const angle = p[0];
  let note: PatternNote | null = null;
  if (!(misfit <= o.maxMisfit) || Math.abs(angle) > o.maxAngle) note = 'poor-fit';
  else if (!(angleError <= o.maxAngleError)) note = 'too-noisy';
  return { angle: note ? null : angle, angleError, shift, shiftError, note, anisotropy, misfit, samples: m };
}

/** Sums patternSums returns: s22, s12, s11, pixels used, residual sum of squares. */
const PATTERN_SUMS = 5;

/**
 * The pixel loop of one evaluation of the pattern fit, in a function of its own over typed arrays
 * (as a closure made per fit, V8 compiled it again every frame): the window's pixels (offsets u, v
 * from the first centroid, values f1) rotated by phi about (cx, cy) on the second map and sampled
 * there; sums gets [Sum f2^2, Sum f1 f2, Sum f1^2, pixels used, Sum (g f2 - f1)^2] and, when
 * `normal`, the upper triangle of J^T J and J^T r of the parameters (phi, tx, ty, gain).
 */
function patternSums(
  u: Float64Array, v: Float64Array, f1: Float64Array, field: ArrayLike<number>, nx: number, ny: number, dx: number, dy: number,
  cx: number, cy: number, phi: number, g: number, normal: boolean, JtJ: Float64Array, Jtr: Float64Array, sums: Float64Array,
): void {
  const c = Math.cos(phi), sn = Math.sin(phi);
  const s = new Float64Array(3);
  let s22 = 0, s12 = 0, s11 = 0, used = 0;
  if (normal) { JtJ.fill(0); Jtr.fill(0); }
  let rss = 0;
  for (let k = 0; k < u.length; k++) {
    const X = cx + c * u[k] - sn * v[k];
    const Y = cy + sn * u[k] + c * v[k];
    let f2: number;
    if (normal) {
      if (!sampleCubic(field, nx, ny, X / dx, Y / dy, s)) continue;
      f2 = s[0];
    } else {
      // The scan: the value alone (a valid sample is finite: NaN marks an invalid one).
      f2 = sampleCubicValue(field, nx, ny, X / dx, Y / dy);
      if (Number.isNaN(f2)) continue;
    }
    used++;
    s22 += f2 * f2; s12 += f1[k] * f2; s11 += f1[k] * f1[k];
    if (normal) {
      const gX = s[1] / dx, gY = s[2] / dy;
      // d/dphi of the sample position: R'(phi) (u, v).
      const dXp = -sn * u[k] - c * v[k], dYp = c * u[k] - sn * v[k];
      const j0 = g * (gX * dXp + gY * dYp), j1 = g * gX, j2 = g * gY, j3 = f2;
      const r = g * f2 - f1[k];
      rss += r * r;
      // The upper triangle of J^T J and J^T r, written out (an array per pixel was most of
      // the fit's garbage).
      Jtr[0] += j0 * r; JtJ[0] += j0 * j0; JtJ[1] += j0 * j1; JtJ[2] += j0 * j2; JtJ[3] += j0 * j3;
      Jtr[1] += j1 * r; JtJ[5] += j1 * j1; JtJ[6] += j1 * j2; JtJ[7] += j1 * j3;
      Jtr[2] += j2 * r; JtJ[10] += j2 * j2; JtJ[11] += j2 * j3;
      Jtr[3] += j3 * r; JtJ[15] += j3 * j3;
    }
  }
  sums[0] = s22; sums[1] = s12; sums[2] = s11; sums[3] = used; sums[4] = rss;
}
