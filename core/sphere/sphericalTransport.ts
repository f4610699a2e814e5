// What the helicity flux on the sphere needs from a map: B_r (0 where no data) and the horizontal
// footpoint velocity in the grid's native components (km/s, 0 where no data), with the mask. The
// velocity is given as vx toward increasing heliographic longitude and vy toward the north
// (docs/sphere.md); oblique grids turn it into native components (core/sphere/sphericalGrid.ts).

import { InputError } from '../inputError.js';
import type { SphericalGrid } from './sphericalGrid.js';
import { nativeVelocity } from './sphericalGrid.js';

export interface SphericalTransport {
  /** B_r, G; 0 where the pixel has no data. */
  readonly bn: Float64Array;
  /** Velocity toward native east and north, km/s; 0 where no data. */
  readonly ue: Float64Array;
  readonly un: Float64Array;
  readonly valid: Uint8Array;
  readonly validCount: number;
  readonly maskedFraction: number;
}

export function sphericalTransport(
  grid: SphericalGrid, bn: ArrayLike<number>, vx: ArrayLike<number>, vy: ArrayLike<number>, source = 'map',
): SphericalTransport {
  const n = grid.nx * grid.ny;
  for (const [name, m] of [['bn', bn], ['vx', vx], ['vy', vy]] as const) {
    if (m.length !== n) throw new InputError(source, name, `has ${m.length} values but the grid has ${grid.nx}*${grid.ny} = ${n}`);
  }
  const { ue, un } = nativeVelocity(grid, vx, vy);
  const b = new Float64Array(n), valid = new Uint8Array(n);
  let count = 0;
  for (let i = 0; i < n; i++) {
    if (Number.isFinite(bn[i]) && Number.isFinite(ue[i]) && Number.isFinite(un[i])) {
      b[i] = bn[i]; valid[i] = 1; count++;
    } else {
      ue[i] = 0; un[i] = 0;
    }
  }
  if (count === 0) throw new InputError(source, 'bn', 'no pixel has a valid field and velocity (all NaN)');
  return { bn: b, ue, un, valid, validCount: count, maskedFraction: 1 - count / n };
}
