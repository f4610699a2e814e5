// The flux transport Bn u that every helicity-flux formula needs (Demoulin & Berger 2003):
// Bn u = Bn v_t - v_n B_t with vector data, or Bn u with u the tracked (footpoint) velocity.
// Using the product keeps it finite on polarity inversion lines: nothing divides by Bn.
// Invalid pixels (NaN in any map the formula uses) are zeroed in the returned maps and counted.

import type { Frame } from './frame.js';
import { hasVectorData } from './frame.js';
import { InputError } from './inputError.js';

export interface FluxTransport {
  /** Normal field, G, 0 where invalid. */
  readonly bn: Float64Array;
  /** Bn u, G km/s, 0 where invalid. */
  readonly fx: Float64Array;
  readonly fy: Float64Array;
  /** 1 where the pixel took part. */
  readonly valid: Uint8Array;
  readonly validCount: number;
  /** Share of pixels left out as no data. */
  readonly maskedFraction: number;
  /** True when Bn u came from v_t and v_n with the horizontal field. */
  readonly fromVectorData: boolean;
}

export interface VelocityMaps {
  readonly vx: Float64Array;
  readonly vy: Float64Array;
  readonly vz?: Float64Array;
}

/**
 * Bn u for `frame` with the velocity it carries, or with `velocity` given separately (for
 * example inferred between two frames). Throws InputError when there is no velocity or no valid pixel.
 */
export function fluxTransport(frame: Frame, velocity?: VelocityMaps): FluxTransport {
  const source = frame.provenance?.source ?? 'frame';
  const vx = velocity?.vx ?? frame.vx;
  const vy = velocity?.vy ?? frame.vy;
  const vz = velocity?.vz ?? frame.vz;
  if (!vx || !vy) throw new InputError(source, 'vx/vy', 'no velocity field: give vx and vy or infer them from two frames');
  const n = frame.nx * frame.ny;
  if (vx.length !== n || vy.length !== n) throw new InputError(source, 'vx/vy', `velocity maps must have nx*ny = ${n} values`);
  const vector = frame.bx !== undefined && frame.by !== undefined && vz !== undefined
    && (velocity === undefined ? hasVectorData(frame) : true);
  const bn = new Float64Array(n);
  const fx = new Float64Array(n);
  const fy = new Float64Array(n);
  const valid = new Uint8Array(n);
  let count = 0;
  const { bx, by } = frame;
  for (let i = 0; i < n; i++) {
    const b = frame.bn[i];
    let px: number, py: number;
    if (vector) {
      px = b * vx[i] - vz![i] * bx![i];
      py = b * vy[i] - vz![i] * by![i];
    } else {
      px = b * vx[i];
      py = b * vy[i];
    }
    if (Number.isFinite(b) && Number.isFinite(px) && Number.isFinite(py)) {
      bn[i] = b; fx[i] = px; fy[i] = py; valid[i] = 1; count++;
    }
  }
  if (count === 0) throw new InputError(source, 'bn', 'no pixel has a valid field and velocity (all NaN)');
  return { bn, fx, fy, valid, validCount: count, maskedFraction: 1 - count / n, fromVectorData: vector };
}
