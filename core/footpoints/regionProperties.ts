// Properties of labelled regions of a bn map: flux, area, centroids and second moments, both
// geometric (every pixel weighs 1) and flux-weighted (a pixel weighs |bn|). Coordinates are Mm with
// pixel (ix, iy) at (ix*dx, iy*dy), the convention of the helicity engine.

import type { Grid } from '../grid.js';
import { pixelFluxMx } from '../units.js';

export interface Moments {
  /** Centroid, Mm. */
  readonly x: number;
  readonly y: number;
  /** Central second moments normalised by the total weight, Mm^2. */
  readonly xx: number;
  readonly xy: number;
  readonly yy: number;
  /** Angle of the major axis, rad, counter-clockwise from +x, in (-pi/2, pi/2]. */
  readonly orientation: number;
  /** Full axis lengths of the ellipse with the same second moments (4 sqrt(eigenvalue)), Mm. */
  readonly major: number;
  readonly minor: number;
  /** major / minor (1 for a round region; Infinity for a line). */
  readonly elongation: number;
}

export interface RegionProperties {
  readonly label: number;
  /** +1 or -1: the sign of the net flux. */
  readonly polarity: 1 | -1;
  readonly pixels: number;
  /** Area, Mm^2. */
  readonly area: number;
  /** Signed flux, Mx. */
  readonly flux: number;
  /** Largest |bn|, G. */
  readonly peak: number;
  readonly geometric: Moments;
  readonly fluxWeighted: Moments;
  /** Bounding box in pixel indices, inclusive. */
  readonly box: { readonly x0: number; readonly x1: number; readonly y0: number; readonly y1: number };
  /** True when a pixel lies on the border of the grid. */
  readonly touchesEdge: boolean;
}

/** Moments from weight sums in pixel units (s = sum w, sx = sum w x, ...), scaled to Mm. */
export function momentsFromSums(s: number, sx: number, sy: number, sxx: number, sxy: number, syy: number, dx: number, dy: number): Moments {
  const mx = sx / s, my = sy / s;
  const xx = Math.max(0, sxx / s - mx * mx) * dx * dx;
  const yy = Math.max(0, syy / s - my * my) * dy * dy;
  const xy = (sxy / s - mx * my) * dx * dy;
  const orientation = halfTurnAngle(0.5 * Math.atan2(2 * xy, xx - yy));
  const mean = (xx + yy) / 2, half = Math.sqrt(((xx - yy) / 2) ** 2 + xy * xy);
  const l1 = mean + half, l2 = Math.max(0, mean - half);
  const major = 4 * Math.sqrt(l1), minor = 4 * Math.sqrt(l2);
  return { x: mx * dx, y: my * dy, xx, xy, yy, orientation, major, minor, elongation: minor > 0 ? major / minor : Infinity };
}

/** An axis angle folded into (-pi/2, pi/2]. */
export function halfTurnAngle(a: number): number {
  let r = a % Math.PI;
  if (r <= -Math.PI / 2) r += Math.PI;
  else if (r > Math.PI / 2) r -= Math.PI;
  return r;
}

// Accumulator layout per region (one row of ROW values).
const N = 0, SUM_B = 1, PEAK = 2, GX = 3, GY = 4, GXX = 5, GXY = 6, GYY = 7;
const WS = 8, WX = 9, WY = 10, WXX = 11, WXY = 12, WYY = 13, X0 = 14, X1 = 15, Y0 = 16, Y1 = 17;
const ROW = 18;

/**
 * Properties of every label > 0 in `labels`, ascending by label. Pixels whose bn is NaN are left
 * out of every sum (a label on a no-data pixel adds nothing).
 */
export function regionProperties(labels: Int32Array, bn: ArrayLike<number>, grid: Grid): RegionProperties[] {
  const { nx, ny, dx, dy } = grid;
  const n = nx * ny;
  if (labels.length !== n || bn.length !== n) throw new RangeError(`labels and bn must have nx*ny = ${n} values`);
  const slot = new Map<number, number>();
  const order: number[] = [];
  let acc = new Float64Array(64 * ROW);
  let lastLabel = 0, lastSlot = -1;
  for (let iy = 0; iy < ny; iy++) {
    for (let ix = 0; ix < nx; ix++) {
      const i = iy * nx + ix;
      const l = labels[i];
      if (l <= 0) continue;
      const b = bn[i];
      if (!Number.isFinite(b)) continue;
      let s: number;
      if (l === lastLabel) s = lastSlot;
      else {
        let found = slot.get(l);
        if (found === undefined) {
          found = order.length;
          slot.set(l, found);
          order.push(l);
          if ((found + 1) * ROW > acc.length) {
            const grown = new Float64Array(acc.length * 2);
            grown.set(acc);
            acc = grown;
          }
          const o = found * ROW;
          acc[o + X0] = ix; acc[o + X1] = ix; acc[o + Y0] = iy; acc[o + Y1] = iy;
        }
        s = found;
        lastLabel = l; lastSlot = s;
      }
      const o = s * ROW;
      const w = Math.abs(b);
      acc[o + N] += 1; acc[o + SUM_B] += b;
      if (w > acc[o + PEAK]) acc[o + PEAK] = w;
      acc[o + GX] += ix; acc[o + GY] += iy;
      acc[o + GXX] += ix * ix; acc[o + GXY] += ix * iy; acc[o + GYY] += iy * iy;
      acc[o + WS] += w; acc[o + WX] += w * ix; acc[o + WY] += w * iy;
      acc[o + WXX] += w * ix * ix; acc[o + WXY] += w * ix * iy; acc[o + WYY] += w * iy * iy;
      if (ix < acc[o + X0]) acc[o + X0] = ix;
      if (ix > acc[o + X1]) acc[o + X1] = ix;
      if (iy > acc[o + Y1]) acc[o + Y1] = iy;
    }
  }
  const out: RegionProperties[] = [];
  const sorted = order.map((label, s) => ({ label, s })).sort((a, b) => a.label - b.label);
  for (const { label, s } of sorted) {
    const o = s * ROW;
    const count = acc[o + N];
    const flux = pixelFluxMx(acc[o + SUM_B], dx, dy);
    const geometric = momentsFromSums(count, acc[o + GX], acc[o + GY], acc[o + GXX], acc[o + GXY], acc[o + GYY], dx, dy);
    // A region of zero field everywhere has no flux weighting: fall back to the geometric moments.
    const fluxWeighted = acc[o + WS] > 0
      ? momentsFromSums(acc[o + WS], acc[o + WX], acc[o + WY], acc[o + WXX], acc[o + WXY], acc[o + WYY], dx, dy)
      : geometric;
    const box = { x0: acc[o + X0], x1: acc[o + X1], y0: acc[o + Y0], y1: acc[o + Y1] };
    out.push({
      label, polarity: flux < 0 ? -1 : 1, pixels: count, area: count * dx * dy, flux, peak: acc[o + PEAK],
      geometric, fluxWeighted, box,
      touchesEdge: box.x0 === 0 || box.y0 === 0 || box.x1 === nx - 1 || box.y1 === ny - 1,
    });
  }
  return out;
}
