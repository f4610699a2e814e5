// The rotation of a footpoint in a flux transport F = Bn u (with vector data Bn v_t - v_n B_t):
// the least-squares rigid rotation of u about a centre, weighted by |Bn|,
//   omega = Sum |Bn| [r x u]_z / Sum |Bn| r^2 = Sum sign(Bn) [r x F]_z / Sum |Bn| r^2,
// so nothing divides by Bn. Its 1-sigma is the weighted scatter of the pixels' own rates about it
// over the number of independent windows the estimator's field holds (its Gaussian window covers
// about 4 pi sigma^2 pixels).

import type { Frame } from '../frame.js';
import type { VelocityMaps } from '../fluxTransport.js';
import type { Grid } from '../grid.js';
import { KM_PER_MM } from '../units.js';

/** Rotation rate (rad/s, counter-clockwise) of footpoint `id` about (cx, cy) Mm, or null when too few pixels. */
export function transportRotation(
  grid: Grid, frame: Frame, velocity: VelocityMaps, labels: Int32Array, id: number, cx: number, cy: number,
  windowSigma = 4,
): { omega: number; omegaError: number } | null {
  const { nx, dx, dy } = grid;
  const { bn, bx, by } = frame;
  let num = 0, den = 0, count = 0;
  const rates: { w: number; rate: number }[] = [];
  for (let i = 0; i < labels.length; i++) {
    if (labels[i] !== id) continue;
    const b = bn[i];
    const vz = velocity.vz?.[i] ?? 0;
    const fx = b * velocity.vx[i] - vz * (bx?.[i] ?? 0), fy = b * velocity.vy[i] - vz * (by?.[i] ?? 0);
    if (!Number.isFinite(fx) || !Number.isFinite(fy) || !Number.isFinite(b) || b === 0) continue;
    const rx = (i % nx) * dx - cx, ry = Math.floor(i / nx) * dy - cy;
    const r2 = rx * rx + ry * ry;
    if (r2 === 0) continue;
    const cross = Math.sign(b) * (rx * fy - ry * fx); // |Bn| [r x u]_z, G km/s Mm
    num += cross;
    den += Math.abs(b) * r2;
    rates.push({ w: Math.abs(b) * r2, rate: cross / (Math.abs(b) * r2) });
    count++;
  }
  if (count < 9 || !(den > 0)) return null;
  const omega = num / den; // km/s per Mm
  let s2 = 0;
  for (const p of rates) s2 += p.w * (p.rate - omega) ** 2;
  const independent = Math.max(1, count / (4 * Math.PI * windowSigma * windowSigma));
  const error = Math.sqrt(s2 / den / independent);
  return { omega: omega / KM_PER_MM, omegaError: error / KM_PER_MM };
}
