// The rigid motion of each footpoint between the two frames of a pair, from its pattern: the shift
// and rotation that best map the footpoint's field in the first frame onto the second
// (core/footpoints/patternRotation.ts), over the footprint the footpoint has on the mid-time
// frame. This is what tracking measures, at the pair's mid-time and over one interval, so it needs
// no earlier frame; its errors come from the fit's covariance with its residual.
//
// The motion is a translation U = shift / dt and, where the pattern has angular structure, a
// rotation omega = angle / dt about the mid-time centre; a round footpoint gets a translation only
// and `omega: null` with the reason.

import type { Grid } from '../grid.js';
import { KM_PER_MM } from '../units.js';
import type { PatternNote, PatternRotationOptions } from './patternRotation.js';
import { patternRotation } from './patternRotation.js';
import type { RigidMotion } from './footpointVelocity.js';

export interface MeasuredMotion extends RigidMotion {
  readonly id: number;
  /** 1-sigma errors: translation km/s (and the correlation of ux, uy), rotation rad/s (null with omega). */
  readonly uxError: number;
  readonly uyError: number;
  readonly uCorrelation: number;
  readonly omegaError: number | null;
  /** Why no rotation is given (null when there is one). */
  readonly omegaNote: PatternNote | null;
  readonly anisotropy: number;
}

/**
 * Motions of the footpoints labelled in `labels` (ids > 0; only `ids` when given) between fields
 * `first` and `second` (smoothed bn of the two frames, `dtS` seconds apart). Footpoints whose fit
 * fails are left out.
 */
export function pairMotions(
  first: ArrayLike<number>, second: ArrayLike<number>, labels: Int32Array, grid: Grid, dtS: number,
  options: PatternRotationOptions = {}, ids?: ReadonlySet<number>,
): Map<number, MeasuredMotion> {
  const { nx, dx, dy } = grid;
  type Box = { x0: number; x1: number; y0: number; y1: number; s1: number; x1s: number; y1s: number; s2: number; x2s: number; y2s: number };
  const boxes = new Map<number, Box>();
  for (let i = 0; i < labels.length; i++) {
    const l = labels[i];
    if (l <= 0 || (ids !== undefined && !ids.has(l))) continue;
    const x = i % nx, y = (i - x) / nx;
    let b = boxes.get(l);
    if (!b) { b = { x0: x, x1: x, y0: y, y1: y, s1: 0, x1s: 0, y1s: 0, s2: 0, x2s: 0, y2s: 0 }; boxes.set(l, b); }
    if (x < b.x0) b.x0 = x;
    if (x > b.x1) b.x1 = x;
    if (y < b.y0) b.y0 = y;
    if (y > b.y1) b.y1 = y;
    const w1 = Math.abs(first[i]), w2 = Math.abs(second[i]);
    if (Number.isFinite(w1)) { b.s1 += w1; b.x1s += w1 * x * dx; b.y1s += w1 * y * dy; }
    if (Number.isFinite(w2)) { b.s2 += w2; b.x2s += w2 * x * dx; b.y2s += w2 * y * dy; }
  }
  const out = new Map<number, MeasuredMotion>();
  const perSecond = KM_PER_MM / dtS;
  for (const [id, b] of boxes) {
    if (!(b.s1 > 0 && b.s2 > 0)) continue;
    const box = { x0: b.x0, x1: b.x1, y0: b.y0, y1: b.y1 };
    const c1 = { x: b.x1s / b.s1, y: b.y1s / b.s1 }, c2 = { x: b.x2s / b.s2, y: b.y2s / b.s2 };
    const fit = patternRotation(
      { field: first, labels, label: id, ...c1, box }, { field: second, labels, label: id, ...c2, box }, grid, options,
    );
    if (!fit.shift || !fit.shiftError) continue;
    const omega = fit.angle !== null ? fit.angle / dtS : null;
    out.set(id, {
      id,
      ux: fit.shift.x * perSecond, uy: fit.shift.y * perSecond,
      // The first frame's centre moved by half the shift at mid-time.
      cx: c1.x + fit.shift.x / 2, cy: c1.y + fit.shift.y / 2,
      omega,
      uxError: fit.shiftError.x * perSecond, uyError: fit.shiftError.y * perSecond, uCorrelation: fit.shiftError.correlation,
      omegaError: omega !== null && fit.angleError !== null ? fit.angleError / dtS : null,
      omegaNote: fit.angle !== null ? null : fit.note,
      anisotropy: fit.anisotropy,
    });
  }
  return out;
}
